"use strict";

// Analyses (issue 5): a run of the spatial statistics over one published
// panel version, split into one piece per indicator (one pg-boss job each, so
// several workers share a run), and its results, one row per run × indicator
// × period. The unique keys make a retried piece replace its rows instead of
// adding a second copy; a piece writes all its rows in one transaction.

const RUN_STATES = "('queued','running','completed','failed','cancelled')";

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    const now = { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") };
    const userRef = { type: Sequelize.INTEGER, allowNull: true, references: { model: "users", key: "id" }, onDelete: "SET NULL" };
    const dbl = { type: Sequelize.DOUBLE, allowNull: true };

    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });

      await queryInterface.createTable(
        "runs",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "workspaces", key: "id" }, onDelete: "CASCADE" },
          panel_version_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "panel_versions", key: "id" }, onDelete: "RESTRICT" },
          boundary_version_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "boundary_versions", key: "id" }, onDelete: "RESTRICT" },
          rerun_of: { type: Sequelize.INTEGER, allowNull: true, references: { model: "runs", key: "id" }, onDelete: "SET NULL" },
          origin: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "user" },
          params: { type: Sequelize.JSONB, allowNull: false },
          seed: { type: Sequelize.INTEGER, allowNull: false },
          state: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "queued" },
          progress: { type: Sequelize.DOUBLE, allowNull: false, defaultValue: 0 },
          pieces_total: { type: Sequelize.INTEGER, allowNull: false },
          pieces_done: { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
          results_total: { type: Sequelize.INTEGER, allowNull: false },
          significance_basis: { type: Sequelize.TEXT, allowNull: true },
          error: { type: Sequelize.TEXT, allowNull: true },
          created_by: userRef,
          cancelled_by: userRef,
          started_at: { type: Sequelize.DATE, allowNull: true },
          finished_at: { type: Sequelize.DATE, allowNull: true },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q(`ALTER TABLE runs ADD CONSTRAINT runs_state_known CHECK (state IN ${RUN_STATES})`);
      await q("ALTER TABLE runs ADD CONSTRAINT runs_origin_known CHECK (origin IN ('user','rerun','demo','benchmark'))");
      await q("ALTER TABLE runs ADD CONSTRAINT runs_progress_range CHECK (progress >= 0 AND progress <= 1)");
      await q("ALTER TABLE runs ADD CONSTRAINT runs_pieces_counts CHECK (pieces_total > 0 AND pieces_done >= 0 AND pieces_done <= pieces_total)");
      await queryInterface.addIndex("runs", ["workspace_id", "state"], { transaction });
      await queryInterface.addIndex("runs", ["workspace_id", "created_at"], { transaction });
      await queryInterface.addIndex("runs", ["panel_version_id"], { transaction });

      await queryInterface.createTable(
        "run_pieces",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          run_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "runs", key: "id" }, onDelete: "CASCADE" },
          indicator_code: { type: Sequelize.STRING(120), allowNull: false },
          state: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "queued" },
          attempts: { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
          periods_total: { type: Sequelize.INTEGER, allowNull: false },
          periods_done: { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
          job_id: { type: Sequelize.STRING(64), allowNull: true },
          error: { type: Sequelize.TEXT, allowNull: true },
          started_at: { type: Sequelize.DATE, allowNull: true },
          finished_at: { type: Sequelize.DATE, allowNull: true },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q(`ALTER TABLE run_pieces ADD CONSTRAINT run_pieces_state_known CHECK (state IN ${RUN_STATES})`);
      await queryInterface.addConstraint("run_pieces", {
        type: "unique",
        fields: ["run_id", "indicator_code"],
        name: "run_pieces_run_indicator_unique",
        transaction,
      });

      await queryInterface.createTable(
        "run_results",
        {
          id: { type: Sequelize.BIGINT, autoIncrement: true, primaryKey: true },
          run_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "runs", key: "id" }, onDelete: "CASCADE" },
          indicator_code: { type: Sequelize.STRING(120), allowNull: false },
          period_key: { type: Sequelize.STRING(120), allowNull: false },
          period_index: { type: Sequelize.INTEGER, allowNull: false },
          status: { type: Sequelize.STRING(20), allowNull: false },
          reason: { type: Sequelize.STRING(30), allowNull: true },
          note: { type: Sequelize.TEXT, allowNull: true },
          n: { type: Sequelize.INTEGER, allowNull: false },
          regions_in_boundaries: { type: Sequelize.INTEGER, allowNull: false },
          excluded_missing: { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
          excluded_islands: { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
          exclusions: { type: Sequelize.JSONB, allowNull: false },
          weights: { type: Sequelize.JSONB, allowNull: true },
          i: dbl,
          expected_i: dbl,
          kurtosis: dbl,
          variance_normality: dbl,
          variance_randomisation: dbl,
          z_normality: dbl,
          z_randomisation: dbl,
          p_normality: dbl,
          p_randomisation: dbl,
          p_randomisation_greater: dbl,
          permutations: { type: Sequelize.INTEGER, allowNull: true },
          perm_mean: dbl,
          perm_sd: dbl,
          perm_z: dbl,
          perm_p_greater: dbl,
          perm_p_less: dbl,
          perm_p: dbl,
          band_low: dbl,
          band_high: dbl,
          geary_c: dbl,
          geary_z: dbl,
          geary_p: dbl,
          geary_pseudo_p: dbl,
          general_g: dbl,
          general_g_expected: dbl,
          general_g_z: dbl,
          general_g_p: dbl,
          general_g_pseudo_p: dbl,
          delta_i: dbl,
          deciding_p: dbl,
          adjusted_p: dbl,
          significance: { type: Sequelize.STRING(20), allowNull: true },
          local_counts: { type: Sequelize.JSONB, allowNull: true },
          local: { type: Sequelize.JSONB, allowNull: true },
          created_at: now,
        },
        { transaction },
      );
      await q("ALTER TABLE run_results ADD CONSTRAINT run_results_status_known CHECK (status IN ('computed','not-computed'))");
      await q(
        "ALTER TABLE run_results ADD CONSTRAINT run_results_significance_known CHECK (significance IS NULL OR significance IN ('clustering','dispersion','not-significant'))",
      );
      await queryInterface.addConstraint("run_results", {
        type: "unique",
        fields: ["run_id", "indicator_code", "period_key"],
        name: "run_results_run_indicator_period_unique",
        transaction,
      });
      await queryInterface.addIndex("run_results", ["run_id", "period_index"], { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      for (const table of ["run_results", "run_pieces", "runs"]) await queryInterface.dropTable(table, { transaction });
    });
  },
};
