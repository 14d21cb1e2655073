"use strict";

// A run's local statistics are stored per indicator-period as one jsonb value
// (about 0.5 MB of JSON for 3,600 regions). With PostgreSQL's default pglz
// TOAST compression, storing one took about 41 ms and reading it back 37 ms
// on the 2-core development machine; with lz4, 18 ms and 25 ms, for about 9%
// more space. Only new values are compressed with lz4; existing ones stay as
// they are and read as before. Servers built without lz4 keep pglz.

const LZ4_AVAILABLE = "SELECT 1 FROM pg_settings WHERE name = 'default_toast_compression' AND 'lz4' = ANY(enumvals)";

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    const [rows] = await queryInterface.sequelize.query(LZ4_AVAILABLE);
    if (rows.length === 0) return;
    await queryInterface.sequelize.query("ALTER TABLE run_results ALTER COLUMN local SET COMPRESSION lz4");
  },

  async down(queryInterface) {
    await queryInterface.sequelize.query("ALTER TABLE run_results ALTER COLUMN local SET COMPRESSION DEFAULT");
  },
};
