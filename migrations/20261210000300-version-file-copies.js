"use strict";

// Each boundary and panel version keeps its own copy of its source file
// (lib/intake/version-files.ts), under a key for which no presigned URL is
// ever issued. `file_key` records it; the version's `sha256` is the checksum
// of that copy, verified on every read. Boundaries also record the checksum of
// the TopoJSON their maps and runs read (the copy itself for a TopoJSON file,
// a converted file beside it for GeoJSON).
//
// Rows made before this migration keep file_key NULL and are read from their
// old key as before; the immutability trigger (20261207000300) compares whole
// rows, so the new columns are frozen with the rest once a version is published.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      for (const table of ["boundary_versions", "panel_versions"]) {
        await queryInterface.addColumn(table, "file_key", { type: Sequelize.STRING(512), allowNull: true }, { transaction });
        // A version's copy lives under its workspace's versions/ prefix, never under uploads/ (whose keys get presigned URLs).
        await q(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_file_key_own CHECK (file_key IS NULL OR file_key ~ '^workspaces/[0-9]+/versions/(boundaries|panel)/[0-9]+/[0-9a-f]{64}$')`);
        await q(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_file_key_unique UNIQUE (file_key)`);
      }
      await queryInterface.addColumn("boundary_versions", "topology_sha256", { type: Sequelize.STRING(64), allowNull: true }, { transaction });
      await q("ALTER TABLE boundary_versions ADD CONSTRAINT boundary_versions_topology_sha256_hex CHECK (topology_sha256 IS NULL OR topology_sha256 ~ '^[0-9a-f]{64}$')");
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.removeColumn("boundary_versions", "topology_sha256", { transaction });
      for (const table of ["boundary_versions", "panel_versions"]) await queryInterface.removeColumn(table, "file_key", { transaction });
    });
  },
};
