"use strict";

// Worker leases (issue 7): pg-boss 10 keeps no record of which worker holds
// an active job, so a worker killed mid-job would leave it active until its
// expiry. Each worker registers here, heartbeats, and holds an advisory lock
// on its own connection while alive; it claims every job it starts. A worker
// whose lock is gone and whose heartbeat is stale is presumed dead, and its
// claimed jobs are handed back to pg-boss for a retry (lib/jobs/lease.ts).
//
// run_pieces.worker_label names the worker that ran a piece's latest attempt
// and, once the piece is completed, the one that stored its results.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    const now = { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") };
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.createTable(
        "job_workers",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          label: { type: Sequelize.STRING(200), allowNull: false },
          host: { type: Sequelize.STRING(255), allowNull: false },
          pid: { type: Sequelize.INTEGER, allowNull: false },
          // The pg-boss schema the worker serves: workers of different schemas never reap each other's jobs.
          jobs_schema: { type: Sequelize.STRING(63), allowNull: false },
          started_at: now,
          heartbeat_at: now,
          stopped_at: { type: Sequelize.DATE, allowNull: true },
          stop_reason: { type: Sequelize.TEXT, allowNull: true },
        },
        { transaction },
      );
      await queryInterface.addIndex("job_workers", ["jobs_schema", "stopped_at"], { transaction });
      await queryInterface.createTable(
        "job_claims",
        {
          job_id: { type: Sequelize.UUID, primaryKey: true },
          queue: { type: Sequelize.STRING(100), allowNull: false },
          worker_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "job_workers", key: "id" }, onDelete: "CASCADE" },
          claimed_at: now,
        },
        { transaction },
      );
      await queryInterface.addIndex("job_claims", ["worker_id"], { transaction });
      await queryInterface.addColumn("run_pieces", "worker_label", { type: Sequelize.STRING(200), allowNull: true }, { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.removeColumn("run_pieces", "worker_label", { transaction });
      await queryInterface.dropTable("job_claims", { transaction });
      await queryInterface.dropTable("job_workers", { transaction });
    });
  },
};
