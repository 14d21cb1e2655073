"use strict";

// A third panel layout, "wide-period": one row per region with the periods
// (and indicators) in the column headers, e.g. region,income_2019,income_2020.
// The layout name is longer than the old varchar(10), so both layout columns
// widen (varchar(10) → varchar(20) needs no table rewrite) and both CHECKs
// admit the new name. The immutability trigger compares rows, not types, so
// published versions stay frozen.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      for (const table of ["panel_versions", "column_mappings"]) {
        await q(`ALTER TABLE ${table} ALTER COLUMN layout TYPE varchar(20)`);
        await q(`ALTER TABLE ${table} DROP CONSTRAINT ${table}_layout_known`);
        await q(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_layout_known CHECK (layout IN ('long','wide','wide-period'))`);
      }
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      for (const table of ["panel_versions", "column_mappings"]) {
        // Refuses (CHECK violation) while wide-period rows exist: they cannot be expressed in the old layouts.
        await q(`ALTER TABLE ${table} DROP CONSTRAINT ${table}_layout_known`);
        await q(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_layout_known CHECK (layout IN ('long','wide'))`);
        await q(`ALTER TABLE ${table} ALTER COLUMN layout TYPE varchar(10)`);
      }
    });
  },
};
