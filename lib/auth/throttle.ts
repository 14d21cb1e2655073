import { Op, type WhereOptions } from "sequelize";
import { models } from "@/lib/models";
import type { LoginAttempt } from "@/models/login-attempt";

// Sign-in throttling, stored in login_attempts so it holds across restarts and
// across several app processes. Failures count inside a sliding window.
//
// Per address, OWASP's device-cookie protocol (lib/auth/device-cookie.ts,
// https://owasp.org/www-community/Slow_Down_Online_Guessing_Attacks_with_Device_Cookies):
// - an attempt with a valid device cookie for the address ("trusted") is
//   refused only after failures made with that same cookie;
// - every other attempt ("untrusted") shares one count per address.
// So a guesser, who has no device cookie for the address, can lock out only
// untrusted clients: the owner's own browser, holding its cookie, still signs
// in. A success resets the count it belongs to (that device's, or the
// untrusted one), never the other.
//
// Per network, the client IP: protects all accounts from one noisy source.
// It applies to untrusted attempts only; a valid device cookie proves the
// browser signed in as that address before, which a sprayer cannot forge.

export const THROTTLE_WINDOW_MINUTES = 15;
export const MAX_FAILURES_PER_EMAIL = 5;
export const MAX_FAILURES_PER_DEVICE = 5;
export const MAX_FAILURES_PER_IP = 20;

export type ThrottleKey = "email" | "device" | "ip";
export type ThrottleVerdict = { allowed: true } | { allowed: false; key: ThrottleKey; retryAfterSeconds: number };

function windowStart(now: Date): Date {
  return new Date(now.getTime() - THROTTLE_WINDOW_MINUTES * 60 * 1000);
}

async function failuresSince(where: WhereOptions<LoginAttempt>, since: Date) {
  const { LoginAttempt } = models();
  return LoginAttempt.findAll({
    where: { ...where, succeeded: false, at: { [Op.gt]: since } } as WhereOptions<LoginAttempt>,
    attributes: ["at"],
    order: [["at", "ASC"]],
    raw: true,
  });
}

/** Start of the count for one address and one kind of client: the window, or its last success if later. */
async function countFrom(email: string, device: string | null, now: Date): Promise<Date> {
  const { LoginAttempt } = models();
  const lastSuccess = await LoginAttempt.findOne({
    where: { email, device, succeeded: true, at: { [Op.gt]: windowStart(now) } },
    order: [["at", "DESC"]],
    attributes: ["at"],
    raw: true,
  });
  return lastSuccess ? new Date(lastSuccess.at) : windowStart(now);
}

function retryAfter(oldestCounted: Date, now: Date): number {
  const freesAt = oldestCounted.getTime() + THROTTLE_WINDOW_MINUTES * 60 * 1000;
  return Math.max(1, Math.ceil((freesAt - now.getTime()) / 1000));
}

function over(failures: { at: Date }[], limit: number, key: ThrottleKey, now: Date): ThrottleVerdict | null {
  if (failures.length < limit) return null;
  return { allowed: false, key, retryAfterSeconds: retryAfter(new Date(failures[failures.length - limit].at), now) };
}

/**
 * Whether to check a password for `email` now. `device` is the nonce of a
 * device cookie already verified for this address (trusted client), or null.
 */
export async function checkThrottle(email: string, ip: string, device: string | null = null, now: Date = new Date()): Promise<ThrottleVerdict> {
  if (device) {
    const byDevice = await failuresSince({ email, device }, await countFrom(email, device, now));
    return over(byDevice, MAX_FAILURES_PER_DEVICE, "device", now) ?? { allowed: true };
  }
  const untrusted = await failuresSince({ email, device: null }, await countFrom(email, null, now));
  const byEmail = over(untrusted, MAX_FAILURES_PER_EMAIL, "email", now);
  if (byEmail) return byEmail;
  const byIp = await failuresSince({ ip }, windowStart(now));
  return over(byIp, MAX_FAILURES_PER_IP, "ip", now) ?? { allowed: true };
}

export async function recordAttempt(email: string, ip: string, succeeded: boolean, device: string | null = null): Promise<void> {
  const { LoginAttempt } = models();
  await LoginAttempt.create({ email, ip, succeeded, device });
}
