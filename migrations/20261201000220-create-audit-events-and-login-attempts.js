"use strict";

// audit_events: who did what and when, read by managers on the Team screen.
// login_attempts: stored so that sign-in throttling survives restarts and holds
// across several app processes (an in-memory counter would do neither).

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.createTable(
        "audit_events",
        {
          id: { type: Sequelize.BIGINT, autoIncrement: true, primaryKey: true },
          workspace_id: {
            type: Sequelize.INTEGER,
            allowNull: true,
            references: { model: "workspaces", key: "id" },
            onDelete: "CASCADE",
          },
          actor_id: {
            type: Sequelize.INTEGER,
            allowNull: true,
            references: { model: "users", key: "id" },
            onDelete: "SET NULL",
          },
          // Kept as text as well so a failed sign-in for an unknown address,
          // or a since-deleted user, still reads sensibly.
          actor_email: { type: Sequelize.STRING(320), allowNull: true },
          action: { type: Sequelize.STRING(64), allowNull: false },
          target: { type: Sequelize.STRING(320), allowNull: true },
          detail: { type: Sequelize.JSONB, allowNull: false, defaultValue: {} },
          at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
        },
        { transaction },
      );
      await queryInterface.addIndex("audit_events", ["workspace_id", "at"], { transaction });
      await queryInterface.addIndex("audit_events", ["actor_id", "at"], { transaction });

      await queryInterface.createTable(
        "login_attempts",
        {
          id: { type: Sequelize.BIGINT, autoIncrement: true, primaryKey: true },
          email: { type: Sequelize.STRING(320), allowNull: false },
          ip: { type: Sequelize.STRING(64), allowNull: false },
          succeeded: { type: Sequelize.BOOLEAN, allowNull: false },
          at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
        },
        { transaction },
      );
      await queryInterface.addIndex("login_attempts", ["email", "at"], { transaction });
      await queryInterface.addIndex("login_attempts", ["ip", "at"], { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.dropTable("login_attempts", { transaction });
      await queryInterface.dropTable("audit_events", { transaction });
    });
  },
};
