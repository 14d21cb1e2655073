"use strict";

// Personal API tokens (docs/api-access.md): one row per token, bound to one
// member's place in one workspace. The secret is never stored, only its
// SHA-256 (lib/auth/api-tokens.ts); the id is random so a token shown in a
// list or a URL says nothing about how many tokens exist. A token holds a
// role no higher than its owner's when it was made; the guard caps it again
// by the owner's role at every use. Seen addresses are kept (at most a few
// dozen) so a use from a new one is audited once.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.query(
      `CREATE TABLE api_tokens (
         id uuid PRIMARY KEY,
         workspace_id integer NOT NULL REFERENCES workspaces(id) ON DELETE CASCADE,
         user_id integer NOT NULL REFERENCES users(id) ON DELETE CASCADE,
         name varchar(100) NOT NULL,
         role varchar(20) NOT NULL CHECK (role IN ('manager', 'steward', 'economist', 'subscriber')),
         secret_hash char(64) NOT NULL,
         expires_at timestamptz NOT NULL,
         last_used_at timestamptz,
         last_address varchar(64),
         seen_addresses varchar(64)[] NOT NULL DEFAULT '{}',
         revoked_at timestamptz,
         revoked_by integer REFERENCES users(id) ON DELETE SET NULL,
         created_at timestamptz NOT NULL DEFAULT now(),
         updated_at timestamptz NOT NULL DEFAULT now()
       )`,
    );
    await queryInterface.sequelize.query("CREATE INDEX api_tokens_workspace_user ON api_tokens (workspace_id, user_id)");
  },
  async down(queryInterface) {
    await queryInterface.dropTable("api_tokens");
  },
};
