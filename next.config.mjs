// Security headers that never change per request, on every response including
// static files and redirects. The Content-Security-Policy needs a fresh nonce
// per page, so proxy.ts sets it; static files get a fixed one here instead
// (proxy.ts does not run for them, and two CSP headers would both apply).
const securityHeaders = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Referrer-Policy", value: "strict-origin-when-cross-origin" },
  { key: "Permissions-Policy", value: "accelerometer=(), camera=(), geolocation=(), gyroscope=(), magnetometer=(), microphone=(), payment=(), usb=()" },
  { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
];

/** @type {import('next').NextConfig} */
const nextConfig = {
  // Sequelize, pg and pg-boss load drivers dynamically; bundling them breaks that.
  serverExternalPackages: ["sequelize", "pg", "pg-hstore", "pg-boss", "pg-copy-streams", "nodemailer", "bcryptjs"],
  poweredByHeader: false,
  typescript: { tsconfigPath: "tsconfig.build.json" },
  reactStrictMode: true,
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
