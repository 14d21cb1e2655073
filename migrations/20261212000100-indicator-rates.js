"use strict";

// Rates as first-class indicators: an indicator may be declared the rate of two
// other indicators of the workspace, events over population times a
// multiplier (1 a proportion, 100 per cent, 1,000 per 1,000, 10,000 or
// 100,000). The three columns are all set or all empty; a rate is never its own
// events or population. That both codes are indicators of one panel is checked
// by the application when the steward declares it (lib/intake/service.ts).

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      await q(`ALTER TABLE indicators
                 ADD COLUMN rate_events_code varchar(120),
                 ADD COLUMN rate_population_code varchar(120),
                 ADD COLUMN rate_multiplier integer`);
      await q(`ALTER TABLE indicators ADD CONSTRAINT indicators_rate_complete CHECK (
                 (rate_events_code IS NULL AND rate_population_code IS NULL AND rate_multiplier IS NULL)
              OR (rate_events_code IS NOT NULL AND rate_population_code IS NOT NULL AND rate_multiplier IS NOT NULL))`);
      await q("ALTER TABLE indicators ADD CONSTRAINT indicators_rate_multiplier_known CHECK (rate_multiplier IN (1, 100, 1000, 10000, 100000))");
      await q(`ALTER TABLE indicators ADD CONSTRAINT indicators_rate_codes_distinct CHECK (
                 rate_events_code <> code AND rate_population_code <> code AND rate_events_code <> rate_population_code)`);
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.sequelize.query(
        `ALTER TABLE indicators
           DROP CONSTRAINT indicators_rate_codes_distinct,
           DROP CONSTRAINT indicators_rate_multiplier_known,
           DROP CONSTRAINT indicators_rate_complete,
           DROP COLUMN rate_multiplier,
           DROP COLUMN rate_population_code,
           DROP COLUMN rate_events_code`,
        { transaction },
      );
    });
  },
};
