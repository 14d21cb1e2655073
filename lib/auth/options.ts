import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { env } from "@/lib/config/env";
import { isHttpsUrl, sessionCookie } from "@/lib/security/cookies";
import { verifySignIn } from "./credentials";
import { SIGN_IN_ERROR_CODES } from "./messages";
import { signInSchema } from "./schemas";

/**
 * The client address the sign-in throttle counts against. `next start` keeps
 * an X-Forwarded-For the client sent and only fills it from the socket when it
 * is missing, and a reverse proxy appends the address it saw. So the last
 * entry is the one a proxy (or Next, when there is none) vouches for; earlier
 * entries are whatever the client wrote and would let a guesser pick a fresh
 * "address" for every attempt.
 */
export function clientIp(headers: Record<string, string | string[] | undefined> | Headers | undefined): string {
  const read = (name: string): string | undefined => {
    if (!headers) return undefined;
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const value = headers[name];
    return Array.isArray(value) ? value.join(",") : value;
  };
  const forwarded = read("x-forwarded-for")?.split(",").map((part) => part.trim()).filter(Boolean).at(-1);
  return (forwarded || read("x-real-ip")?.trim() || "unknown").slice(0, 64);
}

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
          const result = await verifySignIn(parsed.data.email, parsed.data.password, clientIp(req?.headers));
          if (result.ok) return { id: String(result.user.id), email: result.user.email, name: result.user.name };
          // next-auth passes a thrown message through to the form as its error code.
          if (result.reason === "throttled") throw new Error(SIGN_IN_ERROR_CODES.throttled);
          return null;
        },
      }),
    ],
    callbacks: {
      async jwt({ token, user }) {
        if (user) token.uid = Number(user.id);
        return token;
      },
      async session({ session, token }) {
        if (session.user && typeof token.uid === "number") session.user.id = token.uid;
        return session;
      },
    },
  };
}

export const authOptions: NextAuthOptions = buildAuthOptions(env().NEXTAUTH_URL);
