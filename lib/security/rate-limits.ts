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

function describeWait(seconds: number): string {
  if (seconds < 90) return `${seconds} second${seconds === 1 ? "" : "s"}`;
  const minutes = Math.ceil(seconds / 60);
  return `${minutes} minute${minutes === 1 ? "" : "s"}`;
}

/** The refusal: 429 with Retry-After (RFC 9110 §10.2.3, seconds) and a sentence saying when to try again. */
export function rateLimitedResponse(action: RateLimitedAction, retryAfterSeconds: number, now = new Date()): Response {
  const { points, windowSeconds, done } = RATE_LIMITS[action];
  const at = new Date(now.getTime() + retryAfterSeconds * 1000).toISOString().slice(11, 16);
  const window = windowSeconds === 3600 ? "an hour" : describeWait(windowSeconds);
  return Response.json(
    {
      error: `You have ${done} ${points} times within ${window}, the most allowed. Try again in ${describeWait(retryAfterSeconds)} (after ${at} UTC).`,
      retryAfterSeconds,
    },
    { status: 429, headers: { "Retry-After": String(retryAfterSeconds) } },
  );
}

/**
 * Counts one `action` by `userId`. Returns null when it is allowed, else the
 * 429 answer to send; call it before anything is written or queued.
 * @throws when the counter cannot be stored (PostgreSQL down): the action is not allowed unchecked.
 */
export async function limitAction(action: RateLimitedAction, userId: number): Promise<Response | null> {
  try {
    await limiterFor(action).consume(String(userId));
    return null;
  } catch (rejection) {
    if (rejection instanceof RateLimiterRes) return rateLimitedResponse(action, Math.max(1, Math.ceil(rejection.msBeforeNext / 1000)));
    throw rejection;
  }
}
