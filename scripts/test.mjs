#!/usr/bin/env node
// `npm test`: a throwaway bring-up on its own ports and data (storage/test/,
// wiped first; database tessera_test), then
//   1. jest: unit and integration tests against the real services (+ worker)
//   2. next build when needed, `next start` + worker on the test port, and the
//      browser tests (jest.browser.config.mjs, Debian's chromium)
// then teardown of everything, even on failure or Ctrl-C. The last line is
// always `N passed, N failed`; the exit code is non-zero on any failure.
//
//   npm test                         everything
//   npm test -- --skip-browser       no build, no browser tests
//   npm test -- tests/integration/services   jest path filter(s), passed to both jest runs
//   npm run services:test            bring up the test services (+ worker), print the
//                                    variables to export, stay up until Ctrl-C
//
// Ports: TEST_APP_PORT (3100), TEST_PG_PORT (55433), TEST_S3_PORT (4669), TEST_SMTP_PORT (2625).
// Data: TESSERA_TEST_DIR (storage/test).
// .env is ignored.
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { stopStalePostgres } from "./services/postgres.mjs";
import { migrateAndSeed, seedDemoData, startNext, startServices, startWorker } from "./services/stack.mjs";
import { Supervisor, installSignalHandlers, killStaleChildren } from "./services/supervisor.mjs";
import { HOST, ROOT, UserFacingError, aptInstall, assertPortsFree, bold, buildIfNeeded, ensureNodeModules, green, log, red, run } from "./services/util.mjs";

const argv = process.argv.slice(2);
const servicesOnly = argv.includes("--services-only");
const skipBrowser = argv.includes("--skip-browser");
const unknownFlags = argv.filter((a) => a.startsWith("--") && !["--services-only", "--skip-browser"].includes(a));
const filters = argv.filter((a) => !a.startsWith("--"));

const STORAGE = path.join(ROOT, "storage");
// TESSERA_TEST_DIR lets two suites run side by side in one checkout (each with
// its own TEST_* ports); the default is storage/test.
const TEST_DIR = process.env.TESSERA_TEST_DIR ? path.resolve(process.env.TESSERA_TEST_DIR) : path.join(STORAGE, "test");
const LOG_DIR = path.join(TEST_DIR, "logs");
const RESULTS_DIR = path.join(TEST_DIR, "results");
const PID_FILE = process.env.TESSERA_TEST_DIR ? `${TEST_DIR}.pids` : path.join(STORAGE, ".test-pids");
const BIN = path.join(ROOT, "node_modules", ".bin");

/** Totals over every stage; a stage that crashes counts as one failure. */
const totals = { passed: 0, failed: 0 };
const stages = [];
const timings = [];
let interrupted = false;

function port(variable, fallback) {
  const raw = process.env[variable] ?? String(fallback);
  const n = Number(raw);
  if (!Number.isInteger(n) || n <= 0 || n > 65535) throw new UserFacingError(`${variable} must be a port number (got "${raw}").`);
  return { port: n, variable };
}

function testEnvironment() {
  const ports = {
    APP: port("TEST_APP_PORT", 3100),
    PG: port("TEST_PG_PORT", 55433),
    S3: port("TEST_S3_PORT", 4669),
    SMTP: port("TEST_SMTP_PORT", 2625),
  };
  const appUrl = `http://${HOST}:${ports.APP.port}`;
  const vars = {
    APP_PORT: String(ports.APP.port),
    NEXTAUTH_URL: appUrl,
    NEXTAUTH_SECRET: randomBytes(32).toString("base64url"),
    PG_PORT: String(ports.PG.port),
    DATABASE_URL: `postgres://tessera:tessera@${HOST}:${ports.PG.port}/tessera_test`,
    S3_PORT: String(ports.S3.port),
    S3_ENDPOINT: `http://${HOST}:${ports.S3.port}`,
    S3_REGION: "us-east-1",
    S3_ACCESS_KEY_ID: "S3RVER",
    S3_SECRET_ACCESS_KEY: "S3RVER",
    S3_BUCKET: "tessera-test",
    S3_FORCE_PATH_STYLE: "true",
    SMTP_PORT: String(ports.SMTP.port),
    SMTP_HOST: HOST,
    // The test stack always starts its own sink on SMTP_PORT (so the Outbox page is on).
    SMTP_SINK_PORT: String(ports.SMTP.port),
    MAIL_FROM: "Tessera test <no-reply@tessera.invalid>",
    TESSERA_OUTBOX: "1",
    TESSERA_TEST: "1",
    NEXT_TELEMETRY_DISABLED: "1",
    AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true",
  };
  const env = { ...process.env, ...vars };
  delete env.NODE_ENV; // jest sets "test", next start "production"
  return { env, vars, ports, appUrl };
}

/** Runs one jest invocation under the supervisor and adds its counts to the totals. */
async function runJest(supervisor, name, env, extraArgs) {
  const outputFile = path.join(RESULTS_DIR, `${name}.json`);
  fs.rmSync(outputFile, { force: true });
  log("test", `${bold(name)}: jest ${extraArgs.join(" ")}`);
  const stageStarted = Date.now();
  const record = supervisor.spawn(`jest:${name}`, path.join(BIN, "jest"), ["--runInBand", "--passWithNoTests", "--json", `--outputFile=${outputFile}`, ...extraArgs], {
    env: { ...env, NODE_ENV: "test" },
    inherit: true,
    stopTimeoutMs: 5_000,
  });
  await record.exitPromise;
  if (interrupted) return; // the signal handler reports and tears down
  let passed = 0;
  let failed = 0;
  let note = "";
  if (fs.existsSync(outputFile)) {
    try {
      const r = JSON.parse(fs.readFileSync(outputFile, "utf8"));
      passed = r.numPassedTests ?? 0;
      failed = (r.numFailedTests ?? 0) + (r.numRuntimeErrorTestSuites ?? 0);
      if (r.numRuntimeErrorTestSuites) note = ` (${r.numRuntimeErrorTestSuites} test file(s) could not run)`;
    } catch (err) {
      note = ` (unreadable results: ${err.message})`;
    }
  } else {
    note = " (jest wrote no results)";
  }
  if ((record.code !== 0 || record.signal) && failed === 0) {
    failed = 1;
    note += ` (jest exited ${record.signal ?? record.code})`;
  }
  totals.passed += passed;
  totals.failed += failed;
  const seconds = Math.round((Date.now() - stageStarted) / 1000);
  stages.push({ name, passed, failed, note, seconds });
  log("test", `${name}: ${passed} passed, ${failed} failed${note} (${seconds} s)`);
}

/** A static check (type-check, lint) counted as one test: it passes or it fails. */
async function runCheck(name, cmd, args, env) {
  const stageStarted = Date.now();
  log("test", `${bold(name)}: ${[path.basename(cmd), ...args].join(" ")}`);
  let failed = 0;
  let note = "";
  try {
    await run(cmd, args, { env });
  } catch (err) {
    failed = 1;
    note = ` (${(err.stdout || err.message || "").trim().split("\n").slice(0, 8).join(" | ").slice(0, 600)})`;
    process.stderr.write(`${red(`${name} failed:`)}\n${err.stdout || ""}${err.stderr || err.message}\n`);
  }
  totals.passed += 1 - failed;
  totals.failed += failed;
  const seconds = Math.round((Date.now() - stageStarted) / 1000);
  stages.push({ name, passed: 1 - failed, failed, note, seconds });
  log("test", `${name}: ${failed ? "failed" : "clean"} (${seconds} s)`);
}

function stageCrashed(name, err) {
  if (interrupted) return; // counted once as "interrupted"
  totals.failed += 1;
  const message = err instanceof UserFacingError ? err.message : err?.stack ?? String(err);
  stages.push({ name, passed: 0, failed: 1, note: ` (${message.split("\n")[0]})` });
  process.stderr.write(`${red(`${name} failed:`)} ${message}\n`);
}

/** Browser test files that the path filters (jest regexes) select. */
function selectedBrowserTests() {
  const dir = path.join(ROOT, "tests", "browser");
  const found = [];
  const walk = (d) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const full = path.join(d, e.name);
      if (e.isDirectory()) {
        if (e.name !== "screenshots" && e.name !== "node_modules") walk(full);
      } else if (/\.test\.tsx?$/.test(e.name)) found.push(full);
    }
  };
  if (fs.existsSync(dir)) walk(dir);
  if (!filters.length) return found;
  return found.filter((f) =>
    filters.some((pattern) => {
      try {
        return new RegExp(pattern).test(f);
      } catch {
        return f.includes(pattern);
      }
    }),
  );
}

async function ensureChromium() {
  if (fs.existsSync("/usr/bin/chromium")) return;
  await aptInstall(["chromium"], "chromium");
  if (!fs.existsSync("/usr/bin/chromium")) throw new UserFacingError("apt-get finished but /usr/bin/chromium is still missing.");
}

function printSummary() {
  if (stages.length) {
    process.stdout.write(`\n${bold("Summary")}\n`);
    for (const s of stages) {
      const time = s.seconds !== undefined ? ` in ${s.seconds} s` : "";
      process.stdout.write(`  ${s.failed ? red("✗") : green("✓")} ${s.name.padEnd(18)} ${s.passed} passed, ${s.failed} failed${time}${s.note}\n`);
    }
    if (timings.length) process.stdout.write(`  timings: ${timings.join(", ")}\n`);
  }
  process.stdout.write(`${totals.passed} passed, ${totals.failed} failed\n`);
}

async function main() {
  const started = Date.now();
  if (unknownFlags.length) throw new UserFacingError(`Unknown option(s) ${unknownFlags.join(", ")}: use --services-only, --skip-browser, or jest path filters.`);
  await ensureNodeModules();
  const { env, vars, ports, appUrl } = testEnvironment();

  fs.mkdirSync(STORAGE, { recursive: true });
  await killStaleChildren(PID_FILE);
  await stopStalePostgres(path.join(TEST_DIR, "postgres"));
  await assertPortsFree(
    [
      { ...ports.APP, service: "test web app" },
      { ...ports.PG, service: "test PostgreSQL" },
      { ...ports.S3, service: "test S3 (s3rver)" },
      { ...ports.SMTP, service: "test SMTP sink" },
    ],
    "in the environment (e.g. {var}=<port> npm test)",
  );

  fs.rmSync(TEST_DIR, { recursive: true, force: true });
  fs.mkdirSync(LOG_DIR, { recursive: true });
  fs.mkdirSync(RESULTS_DIR, { recursive: true });

  const supervisor = new Supervisor({ pidFile: PID_FILE });
  const stack = { env, storageDir: TEST_DIR, ports, supervisor, logDir: LOG_DIR, fastPostgres: true };
  let finishing = false;
  const finish = async () => {
    if (finishing) return;
    finishing = true;
    if (interrupted) {
      totals.failed += 1;
      stages.push({ name: "interrupted", passed: 0, failed: 1, note: " (stopped by a signal before the tests finished)" });
    }
    await supervisor.stopAll();
    if (!servicesOnly || totals.failed > 0) printSummary();
    process.exit(totals.failed > 0 ? 1 : 0);
  };
  installSignalHandlers(supervisor, () => {
    interrupted = !servicesOnly;
    return finish();
  });
  supervisor.onUnexpectedExit = (record) => {
    if (record.name.startsWith("jest:")) return;
    log("test", red(`${record.name} exited unexpectedly (${record.signal ?? `exit ${record.code}`}); see ${path.relative(ROOT, LOG_DIR)}/${record.name}.log`));
  };

  // Bring-up.
  try {
    await startServices(stack);
    await migrateAndSeed(stack);
    await startWorker(stack);
    const upSeconds = ((Date.now() - started) / 1000).toFixed(1);
    timings.push(`bring-up ${upSeconds} s`);
    log("test", `test services up in ${upSeconds} s (logs in ${path.relative(ROOT, LOG_DIR)}/)`);
  } catch (err) {
    stageCrashed("bring-up", err);
    return finish();
  }

  if (servicesOnly) {
    const exports = Object.entries(vars)
      .map(([k, v]) => `export ${k}=${/^[\w@%+=:,./-]+$/.test(v) ? v : `'${v.replace(/'/g, "'\\''")}'`}`)
      .join("\n");
    process.stdout.write(
      `\n${green("Test services are up")} (PostgreSQL ${ports.PG.port}, S3 ${ports.S3.port}, SMTP ${ports.SMTP.port}, worker running; no web app).\n` +
        `In another shell, export these and run one test file, e.g.\n\n${exports}\n\nnpx jest tests/integration/services/mail.test.ts\n\nCtrl-C here stops everything.\n`,
    );
    return new Promise(() => {}); // until a signal
  }

  // Stage 0: static checks over the whole tree (tests and scripts included).
  if (!filters.length) {
    await runCheck("typecheck", path.join(BIN, "tsc"), ["--noEmit", "-p", "."], env);
    if (interrupted) return new Promise(() => {});
    await runCheck("lint", path.join(BIN, "eslint"), [".", "--max-warnings", "0"], env);
    if (interrupted) return new Promise(() => {});
  }

  // Stage 1: unit + integration.
  try {
    await runJest(supervisor, "unit+integration", env, filters);
  } catch (err) {
    stageCrashed("unit+integration", err);
  }

  // Stage 2: browser.
  if (interrupted || finishing) return new Promise(() => {}); // teardown in progress
  if (skipBrowser) {
    log("test", "browser tests skipped (--skip-browser)");
  } else if (!selectedBrowserTests().length) {
    log("test", `no browser tests${filters.length ? " match the filter" : " under tests/browser"}: skipping build and browser stage`);
  } else {
    try {
      await ensureChromium();
      // The browser tests see the demo workspace as `npm start` leaves it: the
      // Veldmark data published through the intake path and a completed demo run.
      const seedStarted = Date.now();
      await seedDemoData(stack);
      timings.push(`demo seed ${Math.round((Date.now() - seedStarted) / 1000)} s`);
      const buildStarted = Date.now();
      const built = await buildIfNeeded({ env, tag: "build", logFile: path.join(LOG_DIR, "next-build.log") });
      timings.push(built ? `next build ${Math.round((Date.now() - buildStarted) / 1000)} s` : "next build skipped (unchanged)");
      const appStarted = Date.now();
      await startNext(stack);
      timings.push(`next start ${((Date.now() - appStarted) / 1000).toFixed(1)} s`);
      log("test", `app up at ${appUrl}`);
      await runJest(supervisor, "browser", env, ["-c", "jest.browser.config.mjs", ...filters]);
    } catch (err) {
      stageCrashed("browser", err);
    }
  }

  timings.push(`total ${Math.round((Date.now() - started) / 1000)} s`);
  log("test", `done in ${Math.round((Date.now() - started) / 1000)} s; stopping services`);
  await finish();
}

main().catch((err) => {
  stageCrashed("test run", err);
  printSummary();
  process.exit(1);
});
