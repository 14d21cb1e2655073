"use strict";

// Intake (issue 4): indicators, boundary sets and their versions, regions,
// panels and their versions, observations, remembered column mappings and
// browser uploads. Versions are immutable once written: only their state and
// the timestamps of state changes move (uploaded → validated | rejected →
// published → archived). Observations belong to one panel version and are
// bulk-loaded with COPY in the same transaction that marks the version
// validated, so a failed ingest leaves no rows behind.

const VERSION_STATES = "('uploaded','validated','rejected','published','archived')";

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    const now = { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") };
    const userRef = {
      type: Sequelize.INTEGER,
      allowNull: true,
      references: { model: "users", key: "id" },
      onDelete: "SET NULL",
    };
    const workspaceRef = {
      type: Sequelize.INTEGER,
      allowNull: false,
      references: { model: "workspaces", key: "id" },
      onDelete: "CASCADE",
    };

    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });

      await queryInterface.createTable(
        "indicators",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: workspaceRef,
          code: { type: Sequelize.STRING(120), allowNull: false },
          label: { type: Sequelize.STRING(200), allowNull: false },
          unit: { type: Sequelize.STRING(80), allowNull: true },
          description: { type: Sequelize.TEXT, allowNull: true },
          source: { type: Sequelize.STRING(400), allowNull: true },
          higher_is_better: { type: Sequelize.BOOLEAN, allowNull: true },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await queryInterface.addConstraint("indicators", {
        type: "unique",
        fields: ["workspace_id", "code"],
        name: "indicators_workspace_code_unique",
        transaction,
      });

      await queryInterface.createTable(
        "boundary_sets",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: workspaceRef,
          name: { type: Sequelize.STRING(200), allowNull: false },
          created_by: userRef,
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await queryInterface.addConstraint("boundary_sets", {
        type: "unique",
        fields: ["workspace_id", "name"],
        name: "boundary_sets_workspace_name_unique",
        transaction,
      });

      await queryInterface.createTable(
        "uploads",
        {
          id: { type: Sequelize.UUID, primaryKey: true, defaultValue: Sequelize.literal("gen_random_uuid()") },
          workspace_id: workspaceRef,
          kind: { type: Sequelize.STRING(20), allowNull: false },
          s3_key: { type: Sequelize.STRING(512), allowNull: false, unique: true },
          file_name: { type: Sequelize.STRING(255), allowNull: false },
          declared_size: { type: Sequelize.BIGINT, allowNull: false },
          content_type: { type: Sequelize.STRING(120), allowNull: false },
          sha256: { type: Sequelize.STRING(64), allowNull: false },
          state: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "pending" },
          error: { type: Sequelize.TEXT, allowNull: true },
          created_by: userRef,
          expires_at: { type: Sequelize.DATE, allowNull: false },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q("ALTER TABLE uploads ADD CONSTRAINT uploads_kind_known CHECK (kind IN ('boundaries','panel'))");
      await q("ALTER TABLE uploads ADD CONSTRAINT uploads_state_known CHECK (state IN ('pending','received','failed'))");
      await q("ALTER TABLE uploads ADD CONSTRAINT uploads_sha256_hex CHECK (sha256 ~ '^[0-9a-f]{64}$')");
      await q("ALTER TABLE uploads ADD CONSTRAINT uploads_size_positive CHECK (declared_size > 0)");
      await queryInterface.addIndex("uploads", ["workspace_id", "state"], { transaction });

      await queryInterface.createTable(
        "boundary_versions",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          boundary_set_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "boundary_sets", key: "id" },
            onDelete: "CASCADE",
          },
          version: { type: Sequelize.INTEGER, allowNull: false },
          state: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "uploaded" },
          upload_id: {
            type: Sequelize.UUID,
            allowNull: true,
            references: { model: "uploads", key: "id" },
            onDelete: "SET NULL",
          },
          s3_key: { type: Sequelize.STRING(512), allowNull: false },
          file_name: { type: Sequelize.STRING(255), allowNull: false },
          byte_size: { type: Sequelize.BIGINT, allowNull: false },
          sha256: { type: Sequelize.STRING(64), allowNull: false },
          format: { type: Sequelize.STRING(20), allowNull: false },
          object_name: { type: Sequelize.STRING(200), allowNull: false },
          id_property: { type: Sequelize.STRING(200), allowNull: false },
          name_property: { type: Sequelize.STRING(200), allowNull: true },
          region_count: { type: Sequelize.INTEGER, allowNull: true },
          report: { type: Sequelize.JSONB, allowNull: true },
          diff: { type: Sequelize.JSONB, allowNull: true },
          created_by: userRef,
          validated_at: { type: Sequelize.DATE, allowNull: true },
          published_at: { type: Sequelize.DATE, allowNull: true },
          archived_at: { type: Sequelize.DATE, allowNull: true },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q(`ALTER TABLE boundary_versions ADD CONSTRAINT boundary_versions_state_known CHECK (state IN ${VERSION_STATES})`);
      await q("ALTER TABLE boundary_versions ADD CONSTRAINT boundary_versions_format_known CHECK (format IN ('topojson','geojson'))");
      await q("ALTER TABLE boundary_versions ADD CONSTRAINT boundary_versions_version_positive CHECK (version > 0)");
      await queryInterface.addConstraint("boundary_versions", {
        type: "unique",
        fields: ["boundary_set_id", "version"],
        name: "boundary_versions_set_version_unique",
        transaction,
      });
      await queryInterface.addIndex("boundary_versions", ["boundary_set_id", "state"], { transaction });
      await queryInterface.addIndex("boundary_versions", ["sha256"], { transaction });

      await queryInterface.createTable(
        "regions",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          boundary_version_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "boundary_versions", key: "id" },
            onDelete: "CASCADE",
          },
          code: { type: Sequelize.STRING(120), allowNull: false },
          name: { type: Sequelize.STRING(300), allowNull: true },
          attributes: { type: Sequelize.JSONB, allowNull: false, defaultValue: {} },
        },
        { transaction },
      );
      await queryInterface.addConstraint("regions", {
        type: "unique",
        fields: ["boundary_version_id", "code"],
        name: "regions_version_code_unique",
        transaction,
      });

      await queryInterface.createTable(
        "panels",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: workspaceRef,
          name: { type: Sequelize.STRING(200), allowNull: false },
          boundary_set_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "boundary_sets", key: "id" },
            onDelete: "RESTRICT",
          },
          created_by: userRef,
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await queryInterface.addConstraint("panels", {
        type: "unique",
        fields: ["workspace_id", "name"],
        name: "panels_workspace_name_unique",
        transaction,
      });

      await queryInterface.createTable(
        "panel_versions",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          panel_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "panels", key: "id" },
            onDelete: "CASCADE",
          },
          version: { type: Sequelize.INTEGER, allowNull: false },
          state: { type: Sequelize.STRING(20), allowNull: false, defaultValue: "uploaded" },
          upload_id: {
            type: Sequelize.UUID,
            allowNull: true,
            references: { model: "uploads", key: "id" },
            onDelete: "SET NULL",
          },
          s3_key: { type: Sequelize.STRING(512), allowNull: false },
          file_name: { type: Sequelize.STRING(255), allowNull: false },
          byte_size: { type: Sequelize.BIGINT, allowNull: false },
          sha256: { type: Sequelize.STRING(64), allowNull: false },
          layout: { type: Sequelize.STRING(10), allowNull: false },
          decimal_separator: { type: Sequelize.STRING(1), allowNull: false, defaultValue: "." },
          mapping: { type: Sequelize.JSONB, allowNull: false },
          boundary_version_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "boundary_versions", key: "id" },
            onDelete: "RESTRICT",
          },
          row_count: { type: Sequelize.INTEGER, allowNull: true },
          report: { type: Sequelize.JSONB, allowNull: true },
          diff: { type: Sequelize.JSONB, allowNull: true },
          created_by: userRef,
          validated_at: { type: Sequelize.DATE, allowNull: true },
          published_at: { type: Sequelize.DATE, allowNull: true },
          archived_at: { type: Sequelize.DATE, allowNull: true },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q(`ALTER TABLE panel_versions ADD CONSTRAINT panel_versions_state_known CHECK (state IN ${VERSION_STATES})`);
      await q("ALTER TABLE panel_versions ADD CONSTRAINT panel_versions_layout_known CHECK (layout IN ('long','wide'))");
      await q("ALTER TABLE panel_versions ADD CONSTRAINT panel_versions_decimal_known CHECK (decimal_separator IN ('.',','))");
      await q("ALTER TABLE panel_versions ADD CONSTRAINT panel_versions_version_positive CHECK (version > 0)");
      await queryInterface.addConstraint("panel_versions", {
        type: "unique",
        fields: ["panel_id", "version"],
        name: "panel_versions_panel_version_unique",
        transaction,
      });
      await queryInterface.addIndex("panel_versions", ["panel_id", "state"], { transaction });
      await queryInterface.addIndex("panel_versions", ["sha256"], { transaction });

      // No surrogate id and no timestamps: millions of rows, written only by COPY.
      await q(`CREATE TABLE observations (
        panel_version_id integer NOT NULL REFERENCES panel_versions(id) ON DELETE CASCADE,
        indicator_code text NOT NULL,
        period_key text NOT NULL,
        region_code text NOT NULL,
        value double precision NULL,
        CONSTRAINT observations_pkey PRIMARY KEY (panel_version_id, indicator_code, period_key, region_code)
      )`);

      await queryInterface.createTable(
        "column_mappings",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          workspace_id: workspaceRef,
          header_signature: { type: Sequelize.STRING(64), allowNull: false },
          layout: { type: Sequelize.STRING(10), allowNull: false },
          mapping: { type: Sequelize.JSONB, allowNull: false },
          created_at: now,
          updated_at: now,
        },
        { transaction },
      );
      await q("ALTER TABLE column_mappings ADD CONSTRAINT column_mappings_layout_known CHECK (layout IN ('long','wide'))");
      await queryInterface.addConstraint("column_mappings", {
        type: "unique",
        fields: ["workspace_id", "header_signature"],
        name: "column_mappings_workspace_signature_unique",
        transaction,
      });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      for (const table of [
        "column_mappings",
        "observations",
        "panel_versions",
        "panels",
        "regions",
        "boundary_versions",
        "uploads",
        "boundary_sets",
        "indicators",
      ]) {
        await queryInterface.dropTable(table, { transaction });
      }
    });
  },
};
