/** @type {import('next').NextConfig} */
const nextConfig = {
  // Sequelize, pg and pg-boss load drivers dynamically; bundling them breaks that.
  serverExternalPackages: ["sequelize", "pg", "pg-hstore", "pg-boss", "pg-copy-streams", "nodemailer", "bcryptjs"],
  poweredByHeader: false,
  typescript: { tsconfigPath: "tsconfig.build.json" },
  reactStrictMode: true,
  // forbidden() from next/navigation, so a member whose role is too small gets a real 403 page.
  experimental: { authInterrupts: true },
};
export default nextConfig;
