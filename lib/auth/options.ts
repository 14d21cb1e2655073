import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { env } from "@/lib/config/env";
import { isDatabaseUnavailable } from "@/lib/db";
import { isHttpsUrl, sessionCookie } from "@/lib/security/cookies";
import { safeCallbackPath } from "./callback";
import { verifySignIn } from "./credentials";
import { deviceCookieName, readCookie } from "./device-cookie";
import { SIGN_IN_ERROR_CODES } from "./messages";
import { signInSchema } from "./schemas";
import { currentSessionVersion, endSessions } from "./session-version";
import { clientIp } from "./client-ip";

export const SESSION_MAX_AGE_SECONDS = 12 * 60 * 60;

/**
 * next-auth settings for an app served at `appUrl` (NEXTAUTH_URL). Behind
 * https the session cookie is Secure and __Secure- prefixed, and next-auth's
 * other cookies get their secure variants too (lib/security/cookies.ts).
 */
export function buildAuthOptions(appUrl: string): NextAuthOptions {
  return {
    useSecureCookies: isHttpsUrl(appUrl),
    cookies: { sessionToken: sessionCookie(appUrl) },
    session: { strategy: "jwt", maxAge: SESSION_MAX_AGE_SECONDS },
    pages: { signIn: "/sign-in", error: "/sign-in" },
    providers: [
      CredentialsProvider({
        name: "E-mail and password",
        credentials: { email: { label: "E-mail", type: "email" }, password: { label: "Password", type: "password" } },
        async authorize(credentials, req) {
          const parsed = signInSchema.safeParse(credentials ?? {});
          if (!parsed.success) return null;
          const device = readCookie(req?.headers?.cookie, deviceCookieName(appUrl));
          const result = await verifySignIn(parsed.data.email, parsed.data.password, clientIp(req?.headers), device);
          if (result.ok) {
            const { id, email, name, sessionVersion } = result.user;
            return { id: String(id), email, name, sessionVersion };
          }
          // next-auth passes a thrown message through to the form as its error code.
          if (result.reason === "throttled") throw new Error(SIGN_IN_ERROR_CODES.throttled);
          return null;
        },
      }),
    ],
    callbacks: {
      async jwt({ token, user }) {
        if (user) {
          token.uid = Number(user.id);
          token.sv = user.sessionVersion;
        }
        return token;
      },
      // Runs for every getServerSession (so for every guarded page and route,
      // through lib/auth/session.ts) and for /api/auth/session: a session
      // whose version is no longer the user's is answered as no session.
      async session({ session, token }) {
        const uid = token.uid;
        if (typeof uid !== "number" || typeof token.sv !== "number") return { expires: session.expires };
        let current: number | null;
        try {
          current = await currentSessionVersion(uid);
        } catch (error) {
          // next-auth would log a thrown error, answer "no session" and clear
          // the cookie: a database restart would sign everyone out and turn
          // every API answer into a 401. Say "not known now" instead;
          // getSessionUser turns it into the outage (503 / outage screen).
          if (isDatabaseUnavailable(error)) return { expires: session.expires, outage: true };
          throw error;
        }
        if (current !== token.sv) return { expires: session.expires };
        if (session.user) session.user.id = uid;
        return session;
      },
      // Where next-auth sends the browser after signing in or out: only this
      // site's paths (lib/auth/callback.ts); anything else goes to the home page.
      redirect({ url, baseUrl }) {
        return `${baseUrl}${safeCallbackPath(url, baseUrl)}`;
      },
    },
    events: {
      // Signing out ends the user's sessions in every browser, not just this
      // cookie, which a copy could outlive. A session that had already ended
      // changes nothing.
      async signOut({ token }) {
        if (typeof token?.uid === "number" && typeof token.sv === "number") {
          await endSessions(token.uid, { onlyIfVersion: token.sv });
        }
      },
    },
  };
}

export const authOptions: NextAuthOptions = buildAuthOptions(env().NEXTAUTH_URL);
