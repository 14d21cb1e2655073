/**
 * The session cookie's name and flags, in one place for next-auth (lib/auth/options.ts)
 * and the sign-in redirect in proxy.ts, which must read the same cookie.
 * Pure: no next-auth or database imports, so proxy.ts stays small.
 *
 * HttpOnly: page scripts cannot read the session. SameSite=Lax: other sites'
 * forms and fetches do not carry it (top-level links still do, so a link in a
 * digest mail opens a signed-in page). Secure, with the __Secure- prefix, when
 * the app's public URL is https: the browser then never sends it over plain
 * http and refuses it if it was set without Secure. These are next-auth's own
 * defaults, written out so a test can hold them.
 */

export interface SessionCookie {
  name: string;
  options: { httpOnly: true; sameSite: "lax"; path: "/"; secure: boolean };
}

export function isHttpsUrl(appUrl: string): boolean {
  return appUrl.trim().toLowerCase().startsWith("https://");
}

export function sessionCookie(appUrl: string): SessionCookie {
  const secure = isHttpsUrl(appUrl);
  return {
    name: `${secure ? "__Secure-" : ""}next-auth.session-token`,
    options: { httpOnly: true, sameSite: "lax", path: "/", secure },
  };
}
