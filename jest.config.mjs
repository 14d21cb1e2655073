import nextJest from "next/jest.js";

const createJestConfig = nextJest({ dir: "./" });

// d3 and friends ship ESM only; they must be transformed. next/jest replaces
// transformIgnorePatterns set in the options, so it is overridden afterwards.
const esmOnly = ["d3-[a-z-]+", "internmap", "delaunator", "robust-predicates", "topojson-client", "topojson-server"].join("|");

const base = {
  testEnvironment: "node",
  moduleNameMapper: { "^@/(.*)$": "<rootDir>/$1" },
  // scripts/test.mjs (the npm test orchestrator) matches jest 30's default testMatch; it is not a test.
  testPathIgnorePatterns: ["/node_modules/", "/.next/", "/storage/", "<rootDir>/tests/browser/", "<rootDir>/scripts/"],
  modulePathIgnorePatterns: ["<rootDir>/storage/", "<rootDir>/.next/"],
};

export default async function config() {
  const resolved = await createJestConfig(base)();
  resolved.transformIgnorePatterns = [`/node_modules/(?!(${esmOnly})/)`];
  return resolved;
}
