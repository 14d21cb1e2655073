"use strict";

// Hot and cold spots (issue 15): local Getis–Ord Gi* per region, stored beside
// local Moran in each result row of a run that asked for local results, as one
// jsonb value in the same column-wise shape (ids, z, p, pseudo p, adjusted p,
// class). Rows of completed runs stay frozen by the run_results triggers of
// migration 20261207000300, which guard every column of the row. Runs from
// before this column have NULL here; the map says Gi* was not stored for them.
// Like `local`, new values use lz4 where the server has it.

const LZ4_AVAILABLE = "SELECT 1 FROM pg_settings WHERE name = 'default_toast_compression' AND 'lz4' = ANY(enumvals)";

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.sequelize.query("ALTER TABLE run_results ADD COLUMN gi_star jsonb", { transaction });
      const [rows] = await queryInterface.sequelize.query(LZ4_AVAILABLE, { transaction });
      if (rows.length > 0) await queryInterface.sequelize.query("ALTER TABLE run_results ALTER COLUMN gi_star SET COMPRESSION lz4", { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.query("ALTER TABLE run_results DROP COLUMN gi_star");
  },
};
