import { decode } from "next-auth/jwt";
import { sessionCookie } from "@/lib/security/cookies";
import { deviceCookieName, deviceSetCookie, issueDeviceCookie, readCookie, verifyDeviceCookie } from "./device-cookie";

// Issues the device cookie (lib/auth/device-cookie.ts) on the response of a
// successful e-mail-and-password sign-in. next-auth's authorize() cannot set
// cookies, so the sign-in route wraps next-auth's handler with this: a
// sign-in succeeded exactly when the response sets a session cookie, and that
// cookie's JWT names the address the browser is now trusted for.

const SIGN_IN_PATH = /\/api\/auth\/callback\/credentials\/?$/;

function sessionTokenSet(response: Response, name: string): string | null {
  for (const line of response.headers.getSetCookie()) {
    const [pair] = line.split(";");
    const at = pair.indexOf("=");
    if (pair.slice(0, at).trim() === name && pair.slice(at + 1).trim() !== "") return pair.slice(at + 1).trim();
  }
  return null;
}

/** `response`, plus a device cookie when it signs the browser in and the browser has no valid one for that address. */
export async function withDeviceCookie(request: Request, response: Response, appUrl: string, secret: string | undefined): Promise<Response> {
  if (request.method !== "POST" || !SIGN_IN_PATH.test(new URL(request.url).pathname) || !secret) return response;
  const token = sessionTokenSet(response, sessionCookie(appUrl).name);
  if (!token) return response;
  const payload = await decode({ token, secret });
  const email = typeof payload?.email === "string" ? payload.email : null;
  if (!email) return response;
  const presented = readCookie(request.headers.get("cookie"), deviceCookieName(appUrl));
  // A browser keeps its cookie while it stays valid, so its own failure count carries on.
  if (verifyDeviceCookie(presented, email, secret)) return response;
  const headers = new Headers(response.headers);
  headers.append("Set-Cookie", deviceSetCookie(appUrl, issueDeviceCookie(email, secret)));
  return new Response(response.body, { status: response.status, statusText: response.statusText, headers });
}
