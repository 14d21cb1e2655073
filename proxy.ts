import { withAuth } from "next-auth/middleware";

// Only the cheap check: no session cookie → the sign-in page. Whether the
// visitor may see a workspace is decided by lib/auth/guard.ts on the server.
export default withAuth({
  pages: { signIn: "/sign-in" },
});

export const config = {
  // Everything under /w/ needs a session. Sign-in, invitations, the auth API and
  // static files stay public; API routes answer 401 themselves rather than redirect.
  matcher: ["/w/:path*"],
};
