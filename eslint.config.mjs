import coreWebVitals from "eslint-config-next/core-web-vitals";
import typescript from "eslint-config-next/typescript";

const config = [
  { ignores: ["node_modules/**", ".next/**", "storage/**", "coverage/**", "next-env.d.ts", "tests/browser/screenshots/**"] },
  ...coreWebVitals,
  ...typescript,
  {
    // sequelize-cli migrations, seeders and its config are CommonJS by necessity.
    files: ["migrations/**/*.js", "seeders/**/*.js", "config/**/*.cjs", ".sequelizerc"],
    rules: { "@typescript-eslint/no-require-imports": "off" },
  },
];
export default config;
