"use strict";

// Accounts, workspaces and who holds which role where (the roles table (docs/guarantees.md)).
// Roles are checked in the database as well as in lib/auth/roles.ts so a bad
// write from any process (a script, a seeder) cannot invent a fifth role.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.createTable(
        "users",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          email: { type: Sequelize.STRING(320), allowNull: false, unique: true },
          name: { type: Sequelize.STRING(200), allowNull: false },
          password_hash: { type: Sequelize.STRING(100), allowNull: false },
          created_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
          updated_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
        },
        { transaction },
      );
      // E-mail addresses are compared lowercased everywhere; the check keeps a
      // mixed-case duplicate from slipping past the unique index.
      await queryInterface.sequelize.query(
        "ALTER TABLE users ADD CONSTRAINT users_email_lowercase CHECK (email = lower(email))",
        { transaction },
      );

      await queryInterface.createTable(
        "workspaces",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          slug: { type: Sequelize.STRING(64), allowNull: false, unique: true },
          name: { type: Sequelize.STRING(200), allowNull: false },
          created_by: {
            type: Sequelize.INTEGER,
            allowNull: true,
            references: { model: "users", key: "id" },
            onDelete: "SET NULL",
          },
          created_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
          updated_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
        },
        { transaction },
      );
      await queryInterface.sequelize.query(
        "ALTER TABLE workspaces ADD CONSTRAINT workspaces_slug_format CHECK (slug ~ '^[a-z0-9][a-z0-9-]*$')",
        { transaction },
      );

      await queryInterface.createTable(
        "memberships",
        {
          id: { type: Sequelize.INTEGER, autoIncrement: true, primaryKey: true },
          user_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "users", key: "id" },
            onDelete: "CASCADE",
          },
          workspace_id: {
            type: Sequelize.INTEGER,
            allowNull: false,
            references: { model: "workspaces", key: "id" },
            onDelete: "CASCADE",
          },
          role: { type: Sequelize.STRING(20), allowNull: false },
          created_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
          updated_at: { type: Sequelize.DATE, allowNull: false, defaultValue: Sequelize.fn("now") },
        },
        { transaction },
      );
      await queryInterface.sequelize.query(
        "ALTER TABLE memberships ADD CONSTRAINT memberships_role_known CHECK (role IN ('manager','steward','economist','subscriber'))",
        { transaction },
      );
      await queryInterface.addConstraint("memberships", {
        type: "unique",
        fields: ["user_id", "workspace_id"],
        name: "memberships_user_workspace_unique",
        transaction,
      });
      await queryInterface.addIndex("memberships", ["workspace_id", "role"], { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.dropTable("memberships", { transaction });
      await queryInterface.dropTable("workspaces", { transaction });
      await queryInterface.dropTable("users", { transaction });
    });
  },
};
