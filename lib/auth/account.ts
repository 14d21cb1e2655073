import { db } from "@/lib/db";
import { HttpError } from "@/lib/http/errors";
import { models } from "@/lib/models";
import { audit } from "@/lib/security/audit";
import type { SessionUser } from "./session";
import { hashPassword, verifyPassword } from "./passwords";
import type { ChangePasswordInput } from "./schemas";
import { endSessions } from "./session-version";
import { checkThrottle, recordAttempt } from "./throttle";

// The signed-in user's own account, outside any workspace.

export class AccountError extends HttpError {
  constructor(
    override readonly status: 400 | 401 | 429,
    message: string,
    readonly field: string | null = null,
  ) {
    super(status, message, { field });
    this.name = "AccountError";
  }
}

/**
 * Changes the user's password after checking the current one, and ends every
 * session issued before (this browser's too: it signs in again with the new
 * password). A wrong current password counts as a failed sign-in for the
 * address, so a borrowed session cannot be used to guess it at leisure.
 */
export async function changePassword(user: SessionUser, input: ChangePasswordInput, ip: string): Promise<void> {
  const { User } = models();
  const account = await User.findByPk(user.id);
  if (!account) throw new AccountError(401, "Sign in to continue.");
  const verdict = await checkThrottle(account.email, ip);
  if (!verdict.allowed) {
    throw new AccountError(429, "Too many wrong passwords for this address or network. Wait 15 minutes, then try again.");
  }
  const good = await verifyPassword(input.currentPassword, account.passwordHash);
  if (!good) {
    await recordAttempt(account.email, ip, false);
    throw new AccountError(400, "currentPassword: That is not your current password.", "currentPassword");
  }
  const passwordHash = await hashPassword(input.newPassword);
  await db().transaction(async (transaction) => {
    await User.update({ passwordHash }, { where: { id: account.id }, transaction });
    await endSessions(account.id, { transaction });
    await audit(
      { workspaceId: null, actorId: account.id, actorEmail: account.email, action: "account.password-changed", detail: { ip } },
      transaction,
    );
  });
}
