import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { verifySignIn } from "./credentials";
import { SIGN_IN_ERROR_CODES } from "./messages";
import { signInSchema } from "./schemas";

/** Best available client address; next start sets x-forwarded-for from the socket. */
export function clientIp(headers: Record<string, string | string[] | undefined> | Headers | undefined): string {
  const read = (name: string): string | undefined => {
    if (!headers) return undefined;
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const value = headers[name];
    return Array.isArray(value) ? value[0] : value;
  };
  const forwarded = read("x-forwarded-for")?.split(",")[0]?.trim();
  return (forwarded || read("x-real-ip") || "unknown").slice(0, 64);
}

export const SESSION_MAX_AGE_SECONDS = 12 * 60 * 60;

export const authOptions: NextAuthOptions = {
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
