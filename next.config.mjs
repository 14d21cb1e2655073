/** @type {import('next').NextConfig} */
const nextConfig = {
  // Sequelize, pg and pg-boss load drivers dynamically; bundling them breaks that.
  serverExternalPackages: ["sequelize", "pg", "pg-hstore", "pg-boss", "pg-copy-streams", "nodemailer", "bcryptjs"],
  poweredByHeader: false,
  typescript: { tsconfigPath: "tsconfig.build.json" },
  reactStrictMode: true,
};
export default nextConfig;
