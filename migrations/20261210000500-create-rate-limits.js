"use strict";

// Per-user limits on actions that send e-mail (issue 12): counters of
// rate-limiter-flexible's PostgreSQL store (lib/security/rate-limits.ts), one
// row per action and user: points used in the current window and when the
// window ends (epoch milliseconds). The layout is the one the library would
// create itself; it is created here because the schema changes only through
// migrations. Expired rows are deleted by the library once an hour.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.query(
      `CREATE TABLE rate_limits (
         key varchar(255) PRIMARY KEY,
         points integer NOT NULL DEFAULT 0,
         expire bigint
       )`,
    );
  },
  async down(queryInterface) {
    await queryInterface.dropTable("rate_limits");
  },
};
