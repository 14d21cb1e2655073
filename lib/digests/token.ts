/**
 * Signed unsubscribe tokens: base64url(JSON {s: subscription id, e: expiry in
 * seconds since the epoch}) + "." + base64url(HMAC-SHA256 of that part with
 * NEXTAUTH_SECRET). No database lookup is needed to reject a forged token.
 */
import { createHmac, timingSafeEqual } from "node:crypto";
import { env } from "@/lib/config/env";

/** Links in a digest stay valid for 90 days. */
export const UNSUBSCRIBE_TOKEN_TTL_SECONDS = 90 * 24 * 3600;

export type TokenCheck =
  | { ok: true; subscriptionId: number; expiresAt: Date }
  | { ok: false; reason: "malformed" | "tampered" | "expired"; message: string };

export const TOKEN_MESSAGES = {
  malformed: "This unsubscribe link is incomplete or damaged. Copy the whole link from the e-mail, or change your subscription on the Digests screen.",
  tampered: "This unsubscribe link is not one Tessera signed, so nothing was changed. Use the link from the e-mail, or the Digests screen.",
  expired: "This unsubscribe link has expired, so nothing was changed. Use the link in a more recent digest, or the Digests screen.",
} as const;

function secretOf(secret?: string): string {
  const value = secret ?? env().NEXTAUTH_SECRET;
  if (!value) throw new Error("lib/digests/token: NEXTAUTH_SECRET is not set, so unsubscribe links can be neither signed nor checked");
  return value;
}

function mac(payload: string, secret: string): Buffer {
  return createHmac("sha256", secret).update(`tessera-unsubscribe:${payload}`).digest();
}

/** A token for `subscriptionId` that expires `ttlSeconds` after `now`. */
export function signUnsubscribeToken(subscriptionId: number, options: { secret?: string; now?: Date; ttlSeconds?: number } = {}): string {
  if (!Number.isInteger(subscriptionId) || subscriptionId <= 0) throw new Error(`signUnsubscribeToken: subscription id must be a positive integer, got ${subscriptionId}`);
  const now = options.now ?? new Date();
  const expires = Math.floor(now.getTime() / 1000) + (options.ttlSeconds ?? UNSUBSCRIBE_TOKEN_TTL_SECONDS);
  const payload = Buffer.from(JSON.stringify({ s: subscriptionId, e: expires })).toString("base64url");
  return `${payload}.${mac(payload, secretOf(options.secret)).toString("base64url")}`;
}

/** Checks signature first, then expiry. Never throws on bad input. */
export function verifyUnsubscribeToken(token: unknown, options: { secret?: string; now?: Date } = {}): TokenCheck {
  const fail = (reason: "malformed" | "tampered" | "expired"): TokenCheck => ({ ok: false, reason, message: TOKEN_MESSAGES[reason] });
  if (typeof token !== "string" || token.length > 512) return fail("malformed");
  const parts = token.split(".");
  if (parts.length !== 2 || !/^[\w-]+$/.test(parts[0]) || !/^[\w-]+$/.test(parts[1])) return fail("malformed");
  const [payload, signature] = parts;
  const expected = mac(payload, secretOf(options.secret));
  const given = Buffer.from(signature, "base64url");
  if (given.length !== expected.length || !timingSafeEqual(given, expected)) return fail("tampered");
  let parsed: unknown;
  try {
    parsed = JSON.parse(Buffer.from(payload, "base64url").toString("utf8"));
  } catch {
    return fail("malformed");
  }
  const body = parsed as { s?: unknown; e?: unknown };
  if (typeof body.s !== "number" || !Number.isInteger(body.s) || body.s <= 0 || typeof body.e !== "number") return fail("malformed");
  const now = Math.floor((options.now ?? new Date()).getTime() / 1000);
  if (now >= body.e) return fail("expired");
  return { ok: true, subscriptionId: body.s, expiresAt: new Date(body.e * 1000) };
}
