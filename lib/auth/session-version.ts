import { QueryTypes, type Transaction } from "sequelize";
import { db } from "@/lib/db";

// Sessions are JWTs, valid by signature until they expire; nothing on the
// server remembers them. To end them for real, each user has a
// session_version, copied into the JWT at sign-in and compared on every
// request (lib/auth/options.ts, session callback). Raising it refuses every
// session issued before: on sign-out, on removal from the last workspace and
// on a password change.

/** The user's current session version, or null if the user no longer exists. One primary-key lookup. */
export async function currentSessionVersion(userId: number): Promise<number | null> {
  const rows = await db().query<{ session_version: number }>("SELECT session_version FROM users WHERE id = $1", {
    bind: [userId],
    type: QueryTypes.SELECT,
  });
  return rows[0]?.session_version ?? null;
}

/**
 * Ends every session of the user issued so far. With `onlyIfVersion`, only
 * when that is still the current version: a sign-out with a session that has
 * already ended must not end the sessions opened since.
 */
export async function endSessions(userId: number, options: { onlyIfVersion?: number; transaction?: Transaction } = {}): Promise<boolean> {
  const guard = options.onlyIfVersion === undefined ? "" : " AND session_version = $2";
  const bind = options.onlyIfVersion === undefined ? [userId] : [userId, options.onlyIfVersion];
  const [, count] = await db().query(`UPDATE users SET session_version = session_version + 1 WHERE id = $1${guard}`, {
    bind,
    type: QueryTypes.UPDATE,
    transaction: options.transaction,
  });
  return Number(count) > 0;
}
