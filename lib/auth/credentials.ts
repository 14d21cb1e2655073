import { env } from "@/lib/config/env";
import { models } from "@/lib/models";
import { normaliseEmail } from "@/models/user";
import { audit } from "@/lib/security/audit";
import { verifyDeviceCookie } from "./device-cookie";
import { verifyPassword } from "./passwords";
import { checkThrottle, recordAttempt } from "./throttle";

export type SignInUser = { id: number; email: string; name: string; sessionVersion: number };
export type SignInResult =
  | { ok: true; user: SignInUser; trustedDevice: boolean }
  | { ok: false; reason: "invalid" }
  | { ok: false; reason: "throttled"; retryAfterSeconds: number };

/**
 * Checks an e-mail and password, applying the stored throttle first so a
 * locked-out guesser learns nothing even when the guess is right. Unknown
 * addresses and wrong passwords give the same result ("invalid").
 * `deviceCookie` is the raw device cookie the browser sent, if any: valid for
 * this address, the attempt is throttled as a trusted client's
 * (lib/auth/throttle.ts); otherwise as an untrusted one.
 */
export async function verifySignIn(rawEmail: string, password: string, ip: string, deviceCookie: string | null = null): Promise<SignInResult> {
  const email = normaliseEmail(rawEmail).slice(0, 320);
  const device = verifyDeviceCookie(deviceCookie, email, env().NEXTAUTH_SECRET);
  const verdict = await checkThrottle(email, ip, device);
  if (!verdict.allowed) {
    await audit({
      workspaceId: null,
      actorId: null,
      actorEmail: email,
      action: "sign-in.throttled",
      detail: { ip, key: verdict.key, trustedDevice: device !== null },
    });
    return { ok: false, reason: "throttled", retryAfterSeconds: verdict.retryAfterSeconds };
  }

  const { User } = models();
  const user = email ? await User.findOne({ where: { email } }) : null;
  const good = await verifyPassword(password, user?.passwordHash ?? null);
  await recordAttempt(email, ip, good, device);
  await audit({
    workspaceId: null,
    actorId: user?.id ?? null,
    actorEmail: email,
    action: good ? "sign-in.succeeded" : "sign-in.failed",
    detail: { ip, trustedDevice: device !== null },
  });
  if (!good || !user) return { ok: false, reason: "invalid" };
  return {
    ok: true,
    user: { id: user.id, email: user.email, name: user.name, sessionVersion: user.sessionVersion },
    trustedDevice: device !== null,
  };
}
