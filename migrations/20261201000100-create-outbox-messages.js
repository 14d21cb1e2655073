"use strict";

// Captured mail from the local SMTP sink (scripts/services/smtp-sink.mjs).
// Read through lib/mail/outbox.ts; shown on the development Outbox page.
/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.createTable("outbox_messages", {
      id: { type: Sequelize.INTEGER, primaryKey: true, autoIncrement: true, allowNull: false },
      message_id: { type: Sequelize.TEXT, allowNull: true },
      from: { type: Sequelize.TEXT, allowNull: false, defaultValue: "" },
      // Envelope recipients (To, Cc and Bcc), lower-cased.
      to: { type: Sequelize.ARRAY(Sequelize.TEXT), allowNull: false, defaultValue: [] },
      subject: { type: Sequelize.TEXT, allowNull: false, defaultValue: "" },
      text: { type: Sequelize.TEXT, allowNull: true },
      html: { type: Sequelize.TEXT, allowNull: true },
      headers: { type: Sequelize.JSONB, allowNull: false, defaultValue: {} },
      raw: { type: Sequelize.TEXT, allowNull: false },
      received_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.literal("now()") },
    });
    await queryInterface.addIndex("outbox_messages", ["received_at"], { name: "outbox_messages_received_at_idx" });
    await queryInterface.sequelize.query('CREATE INDEX outbox_messages_to_idx ON outbox_messages USING GIN ("to")');
  },

  async down(queryInterface) {
    await queryInterface.dropTable("outbox_messages");
  },
};
