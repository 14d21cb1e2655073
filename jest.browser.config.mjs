import nextJest from "next/jest.js";

// Browser tests (tests/browser/**/*.test.ts): playwright-core driving Debian's
// chromium against `next start` on the test port. scripts/test.mjs starts the
// app and exports NEXTAUTH_URL; tests/helpers/browser.ts launches chromium.
const createJestConfig = nextJest({ dir: "./" });

const esmOnly = ["d3-[a-z-]+", "internmap", "delaunator", "robust-predicates", "topojson-client", "topojson-server"].join("|");

const base = {
  displayName: "browser",
  testEnvironment: "node",
  testMatch: ["<rootDir>/tests/browser/**/*.test.ts"],
  moduleNameMapper: { "^@/(.*)$": "<rootDir>/$1" },
  testPathIgnorePatterns: ["/node_modules/", "/.next/", "/storage/"],
  modulePathIgnorePatterns: ["<rootDir>/storage/", "<rootDir>/.next/"],
  testTimeout: 120_000,
  maxWorkers: 1,
};

export default async function config() {
  const resolved = await createJestConfig(base)();
  resolved.transformIgnorePatterns = [`/node_modules/(?!(${esmOnly})/)`];
  return resolved;
}
