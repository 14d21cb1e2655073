import { STATIC_SECURITY_HEADERS } from "./lib/security/static-headers.mjs";

// Security headers that never change per request, on every response including
// static files. The Content-Security-Policy needs a fresh nonce per page, so
// proxy.ts sets it (with these headers again, and Cache-Control, on every
// answer it gives, redirects included); static files get a fixed one here
// instead (proxy.ts does not run for them, and two CSP headers would both apply).
const securityHeaders = [...STATIC_SECURITY_HEADERS];

/** @type {import('next').NextConfig} */
const nextConfig = {
  // Sequelize, pg and pg-boss load drivers dynamically; bundling them breaks that.
  serverExternalPackages: ["sequelize", "pg", "pg-hstore", "pg-boss", "pg-copy-streams", "nodemailer", "bcryptjs"],
  poweredByHeader: false,
  typescript: { tsconfigPath: "tsconfig.build.json" },
  reactStrictMode: true,
  // proxy.ts answers the trailing-slash redirect itself, so the 308 carries every security header.
  skipTrailingSlashRedirect: true,
  // forbidden() from next/navigation, so a member whose role is too small gets a real 403 page.
  experimental: { authInterrupts: true },
  async headers() {
    return [
      { source: "/:path*", headers: securityHeaders },
      { source: "/_next/static/:path*", headers: [{ key: "Content-Security-Policy", value: "default-src 'none'; frame-ancestors 'none'" }] },
    ];
  },
};
export default nextConfig;
