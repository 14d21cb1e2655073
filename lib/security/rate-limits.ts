/**
 * Per-user limits on actions that send e-mail, so a member (or a stolen
 * session) cannot turn Tessera into a mail cannon against other people's
 * inboxes or the sender's reputation (OWASP API Security Top 10 2023, API4
 * "Unrestricted Resource Consumption", which names e-mail and SMS among the
 * resources to limit per client). Counters live in PostgreSQL (table
 * rate_limits, migration 20261210000500) through rate-limiter-flexible's
 * PostgreSQL store, so they hold across restarts and several app processes;
 * each is a fixed window that starts with the first action and whose refused
 * attempts do not extend it. Keys are per user, across workspaces.
 *
 * Failures of API-token authentication are limited per client address
 * instead (`api-token-failure`, limitFailures/countFailure below): a caller
 * that keeps presenting bad tokens is refused before any token is looked up.
 *
 * All limits are here, in one place.
 */
import { RateLimiterPostgres, RateLimiterRes } from "rate-limiter-flexible";
import { db } from "@/lib/db";

export const RATE_LIMITS = {
  /** "Send digest now": one e-mail to the member themselves. */
  "digest-send-now": { points: 5, windowSeconds: 60 * 60, done: "asked for a digest now" },
  /** Each invitation (and each re-send, which is a new invitation) e-mails an outside address. */
  invitation: { points: 20, windowSeconds: 60 * 60, done: "sent invitations" },
  /** A completed run e-mails every member subscribed to digests after each run. */
  "run-start": { points: 30, windowSeconds: 60 * 60, done: "started runs" },
  /** Requests with an unknown, revoked or expired API token, per client address. */
  "api-token-failure": { points: 30, windowSeconds: 15 * 60, done: "presented an invalid API token" },
} as const satisfies Record<string, { points: number; windowSeconds: number; done: string }>;

export type RateLimitedAction = keyof typeof RATE_LIMITS;

const limiters = new Map<RateLimitedAction, RateLimiterPostgres>();

function limiterFor(action: RateLimitedAction): RateLimiterPostgres {
  let limiter = limiters.get(action);
  if (!limiter) {
    const { points, windowSeconds } = RATE_LIMITS[action];
    limiter = new RateLimiterPostgres({
      storeClient: db(),
      storeType: "sequelize",
      tableName: "rate_limits",
      // The table is made by a migration; the library must not create it.
      tableCreated: true,
      keyPrefix: action,
      points,
      duration: windowSeconds,
    });
    limiters.set(action, limiter);
  }
  return limiter;
}

/** Keys of a limiter; the e-mail limits count user ids, the failure limit client addresses. */
type LimitKey = number | string;

function describeWait(seconds: number): string {
  if (seconds < 90) return `${seconds} second${seconds === 1 ? "" : "s"}`;
  const minutes = Math.ceil(seconds / 60);
  return `${minutes} minute${minutes === 1 ? "" : "s"}`;
}

/** The refusal: 429 with Retry-After (RFC 9110 §10.2.3, seconds) and a sentence saying when to try again. */
export function rateLimitedResponse(action: RateLimitedAction, retryAfterSeconds: number, now = new Date()): Response {
  return Response.json(
    { error: rateLimitMessage(action, retryAfterSeconds, now), retryAfterSeconds },
    { status: 429, headers: { "Retry-After": String(retryAfterSeconds) } },
  );
}

/**
 * Counts one `action` by `userId`. Returns null when it is allowed, else the
 * 429 answer to send; call it before anything is written or queued.
 * @throws when the counter cannot be stored (PostgreSQL down): the action is not allowed unchecked.
 */
export async function limitAction(action: RateLimitedAction, userId: LimitKey): Promise<Response | null> {
  try {
    await limiterFor(action).consume(String(userId));
    return null;
  } catch (rejection) {
    if (rejection instanceof RateLimiterRes) return rateLimitedResponse(action, Math.max(1, Math.ceil(rejection.msBeforeNext / 1000)));
    throw rejection;
  }
}

/**
 * Seconds until `key` may try `action` again when its failures have used up the
 * window, else null. Reads the counter without counting: only failures count
 * (countFailure), so a caller that presents a valid token is never slowed.
 */
export async function failuresExhausted(action: RateLimitedAction, key: LimitKey): Promise<number | null> {
  const state = await limiterFor(action).get(String(key));
  if (!state || state.consumedPoints < RATE_LIMITS[action].points) return null;
  return Math.max(1, Math.ceil(state.msBeforeNext / 1000));
}

/** Counts one failure of `action` by `key` (a refused count past the limit is not an error). */
export async function countFailure(action: RateLimitedAction, key: LimitKey): Promise<void> {
  try {
    await limiterFor(action).consume(String(key));
  } catch (rejection) {
    if (!(rejection instanceof RateLimiterRes)) throw rejection;
  }
}

/** The sentence of a 429 for `action`, as rateLimitedResponse words it. */
export function rateLimitMessage(action: RateLimitedAction, retryAfterSeconds: number, now = new Date()): string {
  const { points, windowSeconds, done } = RATE_LIMITS[action];
  const at = new Date(now.getTime() + retryAfterSeconds * 1000).toISOString().slice(11, 16);
  const window = windowSeconds === 3600 ? "an hour" : describeWait(windowSeconds);
  return `You have ${done} ${points} times within ${window}, the most allowed. Try again in ${describeWait(retryAfterSeconds)} (after ${at} UTC).`;
}
