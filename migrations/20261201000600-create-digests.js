"use strict";

// Digests (issue 6): one subscription per member and workspace, and one
// delivery row per subscription × digest period (after a run: the run; weekly:
// the ISO week; monthly: the month). The unique idempotency key is inserted
// before anything is sent, so a retried job finds the row and never sends a
// second copy.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    const now = { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") };
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });

      await queryInterface.createTable(
        "digest_subscriptions",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          user_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "users", key: "id" }, onDelete: "CASCADE" },
          workspace_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "workspaces", key: "id" }, onDelete: "CASCADE" },
          cadence: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "after_run" },
          scope: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "all" },
          indicator_codes: { type: Sequelize.ARRAY(Sequelize.STRING(120)), allowNull: false, defaultValue: [] },
          threshold: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "every_change" },
          empty_policy: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "skip" },
          active: { type: Sequelize.BOOLEAN, allowNull: false, defaultValue: true },
          unsubscribed_at: { type: Sequelize.DATE, allowNull: true },
          last_digest_at: { type: Sequelize.DATE, allowNull: true },
          last_run_id: { type: Sequelize.INTEGER, allowNull: true, references: { model: "runs", key: "id" }, onDelete: "SET NULL" },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q("ALTER TABLE digest_subscriptions ADD CONSTRAINT digest_subscriptions_cadence_known CHECK (cadence IN ('after_run','weekly','monthly'))");
      await q("ALTER TABLE digest_subscriptions ADD CONSTRAINT digest_subscriptions_scope_known CHECK (scope IN ('all','chosen'))");
      await q("ALTER TABLE digest_subscriptions ADD CONSTRAINT digest_subscriptions_threshold_known CHECK (threshold IN ('every_change','class_changes'))");
      await q("ALTER TABLE digest_subscriptions ADD CONSTRAINT digest_subscriptions_empty_known CHECK (empty_policy IN ('skip','say_so'))");
      await queryInterface.addConstraint("digest_subscriptions", {
        type: "unique",
        fields: ["user_id", "workspace_id"],
        name: "digest_subscriptions_user_workspace_unique",
        transaction,
      });
      await queryInterface.addIndex("digest_subscriptions", ["workspace_id", "active", "cadence"], { transaction });

      await queryInterface.createTable(
        "digest_deliveries",
        {
          id: { type: Sequelize.BIGINT, autoIncrement: true, primaryKey: true },
          subscription_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "digest_subscriptions", key: "id" }, onDelete: "CASCADE" },
          idempotency_key: { type: Sequelize.STRING(200), allowNull: false, unique: true },
          run_id: { type: Sequelize.INTEGER, allowNull: true, references: { model: "runs", key: "id" }, onDelete: "SET NULL" },
          status: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "queued" },
          message_id: { type: Sequelize.STRING(400), allowNull: true },
          attempts: { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
          error: { type: Sequelize.TEXT, allowNull: true },
          sent_at: { type: Sequelize.DATE, allowNull: true },
          summary: { type: Sequelize.JSONB, allowNull: true },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q("ALTER TABLE digest_deliveries ADD CONSTRAINT digest_deliveries_status_known CHECK (status IN ('queued','sending','sent','failed','skipped'))");
      await queryInterface.addIndex("digest_deliveries", ["subscription_id", "created_at"], { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      for (const table of ["digest_deliveries", "digest_subscriptions"]) await queryInterface.dropTable(table, { transaction });
    });
  },
};
