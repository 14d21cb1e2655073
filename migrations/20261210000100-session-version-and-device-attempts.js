"use strict";

// users.session_version: copied into the session JWT at sign-in and compared
// on every request (lib/auth/session.ts). Raising it (sign-out, removal from
// the last workspace, password change) ends every session issued before,
// although a JWT stays validly signed until it expires.
//
// login_attempts.device: the nonce of the signed device cookie the attempt
// came with, or NULL for an untrusted client. The sign-in throttle counts
// failures per device and for untrusted clients separately, so a guesser
// without the cookie cannot lock the account's owner out (lib/auth/throttle.ts).

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface, Sequelize) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.addColumn(
        "users",
        "session_version",
        { type: Sequelize.INTEGER, allowNull: false, defaultValue: 0 },
        { transaction },
      );
      await queryInterface.addColumn("login_attempts", "device", { type: Sequelize.STRING(64), allowNull: true }, { transaction });
      await queryInterface.addIndex("login_attempts", ["email", "device", "at"], { name: "login_attempts_email_device_at", transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      await queryInterface.removeIndex("login_attempts", "login_attempts_email_device_at", { transaction });
      await queryInterface.removeColumn("login_attempts", "device", { transaction });
      await queryInterface.removeColumn("users", "session_version", { transaction });
    });
  },
};
