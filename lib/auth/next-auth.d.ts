import "next-auth";
import "next-auth/jwt";

declare module "next-auth" {
  interface Session {
    user?: { id?: number; name?: string | null; email?: string | null; image?: string | null };
    /** The database did not answer when the session's version was checked (lib/auth/options.ts). */
    outage?: boolean;
  }
  interface User {
    /** users.session_version at sign-in (lib/auth/session-version.ts). */
    sessionVersion?: number;
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    uid?: number;
    /** users.session_version when this session was issued; a different current value ends it. */
    sv?: number;
  }
}
