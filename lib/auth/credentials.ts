import { models } from "@/models";
import { normaliseEmail } from "@/models/user";
import { audit } from "./audit";
import { verifyPassword } from "./passwords";
import { checkThrottle, recordAttempt } from "./throttle";

export type SignInUser = { id: number; email: string; name: string };
export type SignInResult =
  | { ok: true; user: SignInUser }
  | { ok: false; reason: "invalid" }
  | { ok: false; reason: "throttled"; retryAfterSeconds: number };

/**
 * Checks an e-mail and password, applying the stored throttle first so a
 * locked-out guesser learns nothing even when the guess is right. Unknown
 * addresses and wrong passwords give the same result ("invalid").
 */
export async function verifySignIn(rawEmail: string, password: string, ip: string): Promise<SignInResult> {
  const email = normaliseEmail(rawEmail).slice(0, 320);
  const verdict = await checkThrottle(email, ip);
  if (!verdict.allowed) {
    await audit({
      workspaceId: null,
      actorId: null,
      actorEmail: email,
      action: "sign-in.throttled",
      detail: { ip, key: verdict.key },
    });
    return { ok: false, reason: "throttled", retryAfterSeconds: verdict.retryAfterSeconds };
  }

  const { User } = models();
  const user = email ? await User.findOne({ where: { email } }) : null;
  const good = await verifyPassword(password, user?.passwordHash ?? null);
  await recordAttempt(email, ip, good);
  await audit({
    workspaceId: null,
    actorId: user?.id ?? null,
    actorEmail: email,
    action: good ? "sign-in.succeeded" : "sign-in.failed",
    detail: { ip },
  });
  if (!good || !user) return { ok: false, reason: "invalid" };
  return { ok: true, user: { id: user.id, email: user.email, name: user.name } };
}
