"use strict";

// Demo workspace and one account per role, read from demo-accounts.json so the
// README, the start script and the browser tests all share one source.
// Idempotent: users are upserted by e-mail, the workspace by slug, memberships
// by (user, workspace); running it twice leaves one copy of everything.

const path = require("path");
const bcrypt = require("bcryptjs");

const demo = require(path.join(__dirname, "demo-accounts.json"));

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    const sequelize = queryInterface.sequelize;
    await sequelize.transaction(async (transaction) => {
      const userIds = {};
      for (const account of demo.accounts) {
        const email = account.email.trim().toLowerCase();
        const [existing] = await sequelize.query("SELECT id, password_hash FROM users WHERE email = $1", {
          bind: [email],
          transaction,
          type: sequelize.QueryTypes.SELECT,
        });
        // Re-hash only when the stored hash no longer matches, so reseeding does
        // not churn rows but a changed demo password still takes effect.
        const keep = existing && (await bcrypt.compare(account.password, existing.password_hash));
        const hash = keep ? existing.password_hash : await bcrypt.hash(account.password, 10);
        const [row] = await sequelize.query(
          `INSERT INTO users (email, name, password_hash, created_at, updated_at)
           VALUES ($1, $2, $3, now(), now())
           ON CONFLICT (email) DO UPDATE SET name = EXCLUDED.name, password_hash = EXCLUDED.password_hash, updated_at = now()
           RETURNING id`,
          { bind: [email, account.name, hash], transaction, type: sequelize.QueryTypes.SELECT },
        );
        userIds[email] = row.id;
      }

      const creator = demo.accounts.find((a) => a.role === "manager");
      const [workspace] = await sequelize.query(
        `INSERT INTO workspaces (slug, name, created_by, created_at, updated_at)
         VALUES ($1, $2, $3, now(), now())
         ON CONFLICT (slug) DO UPDATE SET name = EXCLUDED.name, updated_at = now()
         RETURNING id`,
        {
          bind: [demo.workspace.slug, demo.workspace.name, creator ? userIds[creator.email.toLowerCase()] : null],
          transaction,
          type: sequelize.QueryTypes.SELECT,
        },
      );

      for (const account of demo.accounts) {
        await sequelize.query(
          `INSERT INTO memberships (user_id, workspace_id, role, created_at, updated_at)
           VALUES ($1, $2, $3, now(), now())
           ON CONFLICT (user_id, workspace_id) DO UPDATE SET role = EXCLUDED.role, updated_at = now()`,
          { bind: [userIds[account.email.toLowerCase()], workspace.id, account.role], transaction },
        );
      }
    });
  },

  async down(queryInterface) {
    const sequelize = queryInterface.sequelize;
    await sequelize.transaction(async (transaction) => {
      await sequelize.query("DELETE FROM workspaces WHERE slug = $1", { bind: [demo.workspace.slug], transaction });
      await sequelize.query("DELETE FROM users WHERE email = ANY($1)", {
        bind: [demo.accounts.map((a) => a.email.toLowerCase())],
        transaction,
      });
    });
  },
};
