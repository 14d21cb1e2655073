"use strict";

// Boundary reforms: crosswalks between two boundary versions (of one boundary
// set or of two), derived by areal weighting or uploaded by a steward as a
// from,to,share CSV, with their pairs; and the provenance of a panel version
// harmonised through one (its source panel version, the crosswalk, and the
// method used per indicator). An uploaded crosswalk keeps its own copy of the
// file, with the checksum, like boundary and panel versions do.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      const now = { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") };
      const boundaryVersionRef = { type: Sequelize.INTEGER, allowNull: false, references: { model: "boundary_versions", key: "id" }, onDelete: "RESTRICT" };

      await q("ALTER TABLE uploads DROP CONSTRAINT uploads_kind_known");
      await q("ALTER TABLE uploads ADD CONSTRAINT uploads_kind_known CHECK (kind IN ('boundaries','panel','crosswalk'))");

      await queryInterface.createTable(
        "crosswalks",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: { type: Sequelize.INTEGER, allowNull: false, references: { model: "workspaces", key: "id" }, onDelete: "CASCADE" },
          from_boundary_version_id: boundaryVersionRef,
          to_boundary_version_id: boundaryVersionRef,
          origin: { type: Sequelize.STRING(20), allowNull: false },
          upload_id: { type: Sequelize.UUID, allowNull: true, references: { model: "uploads", key: "id" }, onDelete: "SET NULL" },
          s3_key: { type: Sequelize.STRING(512), allowNull: true },
          file_name: { type: Sequelize.STRING(255), allowNull: true },
          byte_size: { type: Sequelize.BIGINT, allowNull: true },
          sha256: { type: Sequelize.STRING(64), allowNull: true },
          status: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "pending" },
          report: { type: Sequelize.JSONB, allowNull: true },
          pair_count: { type: Sequelize.INTEGER, allowNull: true },
          created_by: { type: Sequelize.INTEGER, allowNull: true, references: { model: "users", key: "id" }, onDelete: "SET NULL" },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q("ALTER TABLE crosswalks ADD CONSTRAINT crosswalks_origin_known CHECK (origin IN ('derived','uploaded'))");
      await q("ALTER TABLE crosswalks ADD CONSTRAINT crosswalks_status_known CHECK (status IN ('pending','ready','rejected'))");
      await q("ALTER TABLE crosswalks ADD CONSTRAINT crosswalks_versions_differ CHECK (from_boundary_version_id <> to_boundary_version_id)");
      await q(`ALTER TABLE crosswalks ADD CONSTRAINT crosswalks_uploaded_file CHECK (
                 origin = 'derived' OR (s3_key IS NOT NULL AND sha256 ~ '^[0-9a-f]{64}$' AND byte_size > 0))`);
      await queryInterface.addIndex("crosswalks", ["workspace_id", "created_at"], { transaction });

      await queryInterface.createTable(
        "crosswalk_pairs",
        {
          crosswalk_id: { type: Sequelize.INTEGER, allowNull: false, primaryKey: true, references: { model: "crosswalks", key: "id" }, onDelete: "CASCADE" },
          from_code: { type: Sequelize.STRING(120), allowNull: false, primaryKey: true },
          to_code: { type: Sequelize.STRING(120), allowNull: false, primaryKey: true },
          share: { type: Sequelize.DOUBLE, allowNull: false },
          // Area of the overlap (derived crosswalks; null for uploaded ones): what overlap-weighted means need.
          overlap_area: { type: Sequelize.DOUBLE, allowNull: true },
        },
        { transaction },
      );
      await q("ALTER TABLE crosswalk_pairs ADD CONSTRAINT crosswalk_pairs_share_range CHECK (share > 0 AND share <= 1)");

      await q(`ALTER TABLE panel_versions
                 ADD COLUMN source_panel_version_id integer REFERENCES panel_versions(id) ON DELETE SET NULL,
                 ADD COLUMN crosswalk_id integer REFERENCES crosswalks(id) ON DELETE RESTRICT,
                 ADD COLUMN harmonisation jsonb`);
      await q(`ALTER TABLE panel_versions ADD CONSTRAINT panel_versions_harmonised_complete CHECK (
                 (crosswalk_id IS NULL AND harmonisation IS NULL) OR (crosswalk_id IS NOT NULL AND harmonisation IS NOT NULL))`);
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      await q("ALTER TABLE panel_versions DROP CONSTRAINT panel_versions_harmonised_complete");
      await q("ALTER TABLE panel_versions DROP COLUMN harmonisation, DROP COLUMN crosswalk_id, DROP COLUMN source_panel_version_id");
      await queryInterface.dropTable("crosswalk_pairs", { transaction });
      await queryInterface.dropTable("crosswalks", { transaction });
      await q("DELETE FROM uploads WHERE kind = 'crosswalk'");
      await q("ALTER TABLE uploads DROP CONSTRAINT uploads_kind_known");
      await q("ALTER TABLE uploads ADD CONSTRAINT uploads_kind_known CHECK (kind IN ('boundaries','panel'))");
    });
  },
};
