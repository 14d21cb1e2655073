import { createHmac, randomBytes, timingSafeEqual } from "node:crypto";
import { isHttpsUrl } from "@/lib/security/cookies";

// Device cookies, after OWASP's "Slow Down Online Guessing Attacks with Device
// Cookies" (https://owasp.org/www-community/Slow_Down_Online_Guessing_Attacks_with_Device_Cookies),
// which answers the problem OWASP's "Blocking Brute Force Attacks" raises
// about account lockout: anyone who knows an address can lock its owner out.
// The protocol:
// a browser that has signed in successfully as an address gets a cookie
// LOGIN,NONCE,HMAC(secret, LOGIN,NONCE). Later sign-in attempts for that
// address carrying a valid cookie are "trusted" and throttled per cookie;
// all others are "untrusted" and share one lockout per address
// (lib/auth/throttle.ts). The login is not written into the cookie, only into
// the MAC: the address typed into the form is what the cookie is checked
// against, so a cookie for one address is worth nothing for another.
// Pure apart from randomness; the secret is passed in (NEXTAUTH_SECRET).

export const DEVICE_COOKIE_MAX_AGE_SECONDS = 180 * 24 * 60 * 60;

/** Only the sign-in endpoint under /api/auth needs the cookie, so no other request carries it. */
export const DEVICE_COOKIE_PATH = "/api/auth";

const NONCE = /^[A-Za-z0-9_-]{22}$/;
const MAC = /^[A-Za-z0-9_-]{43}$/;

export function deviceCookieName(appUrl: string): string {
  return `${isHttpsUrl(appUrl) ? "__Secure-" : ""}tessera.device`;
}

function mac(email: string, nonce: string, secret: string): Buffer {
  return createHmac("sha256", secret).update(`tessera-device/1\n${email}\n${nonce}`).digest();
}

function requireSecret(secret: string | undefined): string {
  if (!secret) throw new Error("lib/auth/device-cookie: NEXTAUTH_SECRET is not set, so device cookies can be neither signed nor checked");
  return secret;
}

/** A fresh device cookie value for a browser that has just signed in as `email` (normalised). */
export function issueDeviceCookie(email: string, secret: string | undefined): string {
  const nonce = randomBytes(16).toString("base64url");
  return `${nonce}.${mac(email, nonce, requireSecret(secret)).toString("base64url")}`;
}

/**
 * The cookie's nonce when `value` is a device cookie this server issued for
 * `email` (normalised), else null — a missing, malformed, forged or other
 * address's cookie all make the attempt an untrusted one.
 */
export function verifyDeviceCookie(value: string | null | undefined, email: string, secret: string | undefined): string | null {
  if (!value || !secret) return null;
  const [nonce, signature, extra] = value.split(".");
  if (extra !== undefined || !nonce || !signature || !NONCE.test(nonce) || !MAC.test(signature)) return null;
  const expected = mac(email, nonce, secret);
  const given = Buffer.from(signature, "base64url");
  return given.length === expected.length && timingSafeEqual(given, expected) ? nonce : null;
}

/** The value of cookie `name` in a Cookie request header, if present. */
export function readCookie(header: string | string[] | null | undefined, name: string): string | null {
  const text = Array.isArray(header) ? header.join("; ") : header;
  if (!text) return null;
  for (const part of text.split(";")) {
    const at = part.indexOf("=");
    if (at > 0 && part.slice(0, at).trim() === name) return part.slice(at + 1).trim();
  }
  return null;
}

/**
 * The Set-Cookie line for a device cookie: HttpOnly (no page script needs
 * it), SameSite=Strict (only the app's own sign-in form sends it), limited to
 * /api/auth, Secure with the __Secure- prefix behind https.
 */
export function deviceSetCookie(appUrl: string, value: string): string {
  const secure = isHttpsUrl(appUrl);
  return [
    `${deviceCookieName(appUrl)}=${value}`,
    `Path=${DEVICE_COOKIE_PATH}`,
    `Max-Age=${DEVICE_COOKIE_MAX_AGE_SECONDS}`,
    "HttpOnly",
    "SameSite=Strict",
    ...(secure ? ["Secure"] : []),
  ].join("; ");
}
