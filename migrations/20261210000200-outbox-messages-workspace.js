"use strict";

// Which workspace each captured mail belongs to, so the Outbox page of one
// workspace never shows another's digests or invitation links (docs: tenancy).
// The sink (scripts/services/smtp-sink.mjs) fills it from the
// X-Tessera-Workspace header that lib/mail/send.ts sets. Mail captured before
// this column existed stays NULL, and NULL mail is shown on no Outbox page.
/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.sequelize.query(
        "ALTER TABLE outbox_messages ADD COLUMN workspace_id integer NULL REFERENCES workspaces (id) ON DELETE CASCADE",
        { transaction },
      );
      await queryInterface.sequelize.query(
        "CREATE INDEX outbox_messages_workspace_received_idx ON outbox_messages (workspace_id, received_at DESC, id DESC)",
        { transaction },
      );
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.sequelize.query("DROP INDEX IF EXISTS outbox_messages_workspace_received_idx", { transaction });
      await queryInterface.sequelize.query("ALTER TABLE outbox_messages DROP COLUMN IF EXISTS workspace_id", { transaction });
    });
  },
};
