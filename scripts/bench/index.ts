/**
 * Benchmark entry point.
 *
 *   npm run -s bench                      engine, intake validation, run compute (no services needed)
 *   npm run -s bench -- --json            the same as one JSON object: engine cases in `results`
 *                                         ({case, grid, n, links, permutations, ms}), the others under `suites`
 *   npm run -s bench -- --only engine     one suite (engine | intake | runs | crosswalk | intake-ingest | runs-db | workers)
 *   npm run -s bench -- --services        also the suites that need PostgreSQL and S3 (ingest, runs end to end,
 *                                         catalogue p95); start them first with `npm run services:test` and
 *                                         export the environment it prints.
 *   npm run -s bench -- --only exports    a 35,000-region run's local results exported as CSV and JSON:
 *                                         time, bytes, chunks and peak memory growth (needs the test services; also part of --services)
 *   npm run -s bench -- --only workers    one large run with 1 and with 2 worker processes: both wall times
 *                                         and the speed-up (needs the test services; also part of --services)
 *   npm run -s bench -- --no-r            skip the spdep reference timing
 *
 * Figures are wall clock on whatever else the machine is doing; CPU time is printed
 * beside them by the engine suite. Never run these inside the test suite.
 */
import { spawnSync } from "node:child_process";
import path from "node:path";
import { runEngineBench, timeSpdep, type EngineBenchResult } from "./engine";

const argv = process.argv.slice(2);
const json = argv.includes("--json");
const skipR = argv.includes("--no-r");
const withServices = argv.includes("--services");
const onlyIndex = argv.indexOf("--only");
const only = onlyIndex >= 0 ? argv[onlyIndex + 1] : undefined;
const SUITES = ["engine", "intake", "runs", "crosswalk", "intake-ingest", "runs-db", "workers", "exports"] as const;
type Suite = (typeof SUITES)[number];
if (only !== undefined && !SUITES.includes(only as Suite)) {
  process.stderr.write(`bench: unknown suite '${only}'; choose one of ${SUITES.join(", ")}\n`);
  process.exit(2);
}
const wanted = (suite: Suite): boolean =>
  only ? only === suite : suite === "intake-ingest" || suite === "runs-db" || suite === "workers" || suite === "exports" ? withServices : true;
const log = json ? () => undefined : (line: string) => console.log(line);

// Suites other than the engine run as child processes: each measures its own
// peak memory, and a crash in one does not take the others with it.
function child(script: string, args: string[]): unknown {
  const tsx = path.join(process.cwd(), "node_modules", ".bin", "tsx");
  const result = spawnSync(tsx, [path.join("scripts", "bench", script), ...args], {
    encoding: "utf8",
    stdio: ["ignore", "pipe", json ? "pipe" : "inherit"],
    maxBuffer: 64 * 1024 * 1024,
  });
  if (result.status !== 0) return { error: `${script} exited with ${result.status}`, stderr: result.stderr?.slice(-2000) };
  if (!json) {
    process.stdout.write(result.stdout);
    return null;
  }
  const lastLine = result.stdout.trim().split("\n").pop() ?? "";
  try {
    return JSON.parse(lastLine);
  } catch {
    return { error: `${script} printed no JSON`, output: result.stdout.slice(-2000) };
  }
}

const results: EngineBenchResult[] = wanted("engine") ? runEngineBench({ log }) : [];
const suites: Record<string, unknown> = {};

if (wanted("engine") && !json && !skipR) {
  const reference = timeSpdep(100, 999);
  if (reference === null) {
    console.log("R with spdep not available: no reference timing.");
  } else {
    const ours = (name: string) => results.find((r) => r.case === name && r.grid === "100x100")?.ms ?? NaN;
    console.log(
      `spdep 100x100 (same lattice, 999 permutations, wall clock): moran.mc ${reference.global.toFixed(0)} ms (ratio ${(reference.global / ours("global-moran")).toFixed(1)}x), ` +
        `localmoran_perm ${reference.local.toFixed(0)} ms (ratio ${(reference.local / ours("local-moran")).toFixed(1)}x)`,
    );
    console.log(
      `spdep 100x100 CPU time: moran.mc ${reference.globalCpu.toFixed(0)} ms, localmoran_perm ${reference.localCpu.toFixed(0)} ms ` +
        "(compare with the CPU ms above; wall-clock ratios are fair only when the machine is otherwise idle)",
    );
  }
}

const jsonFlag = json ? ["--json"] : [];
if (wanted("intake")) {
  log("\n# intake: 1,000,000 panel rows streamed through validation");
  suites.intake = child("intake.ts", jsonFlag);
}
if (wanted("runs") && !wanted("runs-db")) {
  log("\n# runs: demo panel compute and the large synthetic global run (no database)");
  suites.runs = child("runs.ts", [...jsonFlag, "--skip-db"]);
}
if (wanted("runs-db")) {
  log("\n# runs: compute, demo run end to end through the queue, catalogue p95 over 10,000 rows");
  suites.runs = child("runs.ts", jsonFlag);
}
if (wanted("crosswalk")) {
  log("\n# crosswalk: area-weighted crosswalk between two generated 3,000-region Voronoi boundary versions");
  suites.crosswalk = child("crosswalk.ts", jsonFlag);
}
if (wanted("intake-ingest")) {
  log("\n# intake: 1,000,000 rows validated and COPY-ingested in one transaction");
  suites.intakeIngest = child("intake-ingest.ts", jsonFlag);
}
if (wanted("workers")) {
  log("\n# workers: one large run with 1 and with 2 worker processes, enqueue → every result stored");
  suites.workers = child("workers.ts", jsonFlag);
}
if (wanted("exports")) {
  log("\n# exports: local results of a 35,000-region run streamed as CSV and JSON");
  suites.exports = child("exports.ts", jsonFlag);
}

if (json) console.log(JSON.stringify({ results, suites }));
