import { Op } from "sequelize";
import { models } from "@/models";

// Sign-in throttling, stored in login_attempts so it holds across restarts and
// across several app processes. Two keys: the e-mail address (protects one
// account from a slow guesser) and the client IP (protects all accounts from
// one noisy source). Failures count inside a sliding window; for an address,
// a successful sign-in starts the count again.

export const THROTTLE_WINDOW_MINUTES = 15;
export const MAX_FAILURES_PER_EMAIL = 5;
export const MAX_FAILURES_PER_IP = 20;

export type ThrottleVerdict = { allowed: true } | { allowed: false; key: "email" | "ip"; retryAfterSeconds: number };

function windowStart(now: Date): Date {
  return new Date(now.getTime() - THROTTLE_WINDOW_MINUTES * 60 * 1000);
}

async function failuresSince(where: { email: string } | { ip: string }, since: Date) {
  const { LoginAttempt } = models();
  return LoginAttempt.findAll({
    where: { ...where, succeeded: false, at: { [Op.gt]: since } },
    attributes: ["at"],
    order: [["at", "ASC"]],
    raw: true,
  });
}

function retryAfter(oldestCounted: Date, now: Date): number {
  const freesAt = oldestCounted.getTime() + THROTTLE_WINDOW_MINUTES * 60 * 1000;
  return Math.max(1, Math.ceil((freesAt - now.getTime()) / 1000));
}

export async function checkThrottle(email: string, ip: string, now: Date = new Date()): Promise<ThrottleVerdict> {
  const { LoginAttempt } = models();
  const lastSuccess = await LoginAttempt.findOne({
    where: { email, succeeded: true, at: { [Op.gt]: windowStart(now) } },
    order: [["at", "DESC"]],
    attributes: ["at"],
    raw: true,
  });
  const emailSince = lastSuccess ? new Date(lastSuccess.at) : windowStart(now);
  const byEmail = await failuresSince({ email }, emailSince);
  if (byEmail.length >= MAX_FAILURES_PER_EMAIL) {
    const oldest = byEmail[byEmail.length - MAX_FAILURES_PER_EMAIL].at;
    return { allowed: false, key: "email", retryAfterSeconds: retryAfter(new Date(oldest), now) };
  }
  const byIp = await failuresSince({ ip }, windowStart(now));
  if (byIp.length >= MAX_FAILURES_PER_IP) {
    const oldest = byIp[byIp.length - MAX_FAILURES_PER_IP].at;
    return { allowed: false, key: "ip", retryAfterSeconds: retryAfter(new Date(oldest), now) };
  }
  return { allowed: true };
}

export async function recordAttempt(email: string, ip: string, succeeded: boolean): Promise<void> {
  const { LoginAttempt } = models();
  await LoginAttempt.create({ email, ip, succeeded });
}
