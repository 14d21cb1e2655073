"use strict";

// Invitations keep only a SHA-256 hash of the token: a leaked database dump
// must not be enough to join a workspace.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.createTable(
        "invitations",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "workspaces", key: "id" },
            onDelete: "CASCADE",
          },
          email: { type: Sequelize.STRING(320), allowNull: false },
          role: { type: Sequelize.STRING(20), allowNull: false },
          token_hash: { type: Sequelize.STRING(64), allowNull: false, unique: true },
          expires_at: { type: Sequelize.DATE, allowNull: false },
          accepted_at: { type: Sequelize.DATE, allowNull: true },
          accepted_by: {
            type: Sequelize.INTEGER,
            allowNull: true,
            references: { model: "users", key: "id" },
            onDelete: "SET NULL",
          },
          revoked_at: { type: Sequelize.DATE, allowNull: true },
          invited_by: {
            type: Sequelize.INTEGER,
            allowNull: true,
            references: { model: "users", key: "id" },
            onDelete: "SET NULL",
          },
          created_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
          updated_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
        },
        { transaction },
      );
      await queryInterface.sequelize.query(
        "ALTER TABLE invitations ADD CONSTRAINT invitations_role_known CHECK (role IN ('manager','steward','economist','subscriber'))",
        { transaction },
      );
      await queryInterface.sequelize.query(
        "ALTER TABLE invitations ADD CONSTRAINT invitations_email_lowercase CHECK (email = lower(email))",
        { transaction },
      );
      await queryInterface.addIndex("invitations", ["workspace_id", "created_at"], { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.dropTable("invitations");
  },
};
