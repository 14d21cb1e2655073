import next from "eslint-config-next";

const config = [
  { ignores: ["node_modules/**", ".next/**", "storage/**", "coverage/**", "next-env.d.ts", "tests/browser/screenshots/**"] },
  ...next,
];
export default config;
