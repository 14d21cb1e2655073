"use strict";

// Clustering that remains after the covariates: a run may control for other
// indicators of its panel version (runs.params.controlFor). Each result row
// of such a run then keeps its regression on them and the spatial diagnostics
// of the residuals as one jsonb value (`regression`: coefficients, R², the
// residual Moran's I with its moments, the five Lagrange multiplier tests and
// the model they suggest, or the message saying why a period was not fitted),
// and three plain columns copied from it that the catalogue filters and sorts
// on: `residual_i`, `residual_p` (two-sided) and `model_suggestion`. Rows of
// runs without covariates, and of runs from before this migration, have NULL
// in all four. Completed runs' rows stay frozen by the statement triggers of
// migration 20261207000300, which guard every column of run_results.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.sequelize.query(
        `ALTER TABLE run_results
           ADD COLUMN regression jsonb,
           ADD COLUMN residual_i double precision,
           ADD COLUMN residual_p double precision,
           ADD COLUMN model_suggestion varchar(16)
             CONSTRAINT run_results_model_suggestion_check CHECK (model_suggestion IN ('error', 'lag', 'both', 'neither'))`,
        { transaction },
      );
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.query(
      "ALTER TABLE run_results DROP COLUMN model_suggestion, DROP COLUMN residual_p, DROP COLUMN residual_i, DROP COLUMN regression",
    );
  },
};
