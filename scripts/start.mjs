#!/usr/bin/env node
// `npm start`: everything Tessera needs, on 127.0.0.1, with data under storage/.
//
//   1. npm ci when node_modules is missing or older than package-lock.json
//   2. .env from .env.example on first start (NEXTAUTH_SECRET generated once)
//   3. port checks, then PostgreSQL (private cluster), s3rver, SMTP sink
//   4. sequelize-cli db:migrate + db:seed:all
//   5. next build when the sources changed since the last build
//   6. the job worker and `next start`; prints the URL and demo accounts
//   Ctrl-C (or SIGTERM) stops everything in reverse order.
//
//   node scripts/start.mjs --check   only read the configuration and check the ports
//
// Variables already set in the environment win over .env.
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { stopStalePostgres } from "./services/postgres.mjs";
import { localServices, migrateAndSeed, seedDemoData, startNext, startServices, startWorker } from "./services/stack.mjs";
import { Supervisor, installSignalHandlers, killStaleChildren } from "./services/supervisor.mjs";
import { ROOT, UserFacingError, assertPortsFree, bold, buildIfNeeded, ensureNodeModules, green, log, readDotEnv, red } from "./services/util.mjs";

const args = process.argv.slice(2);
const checkOnly = args.includes("--check");
const ENV_FILE = path.join(ROOT, ".env");
const EXAMPLE_FILE = path.join(ROOT, ".env.example");
const STORAGE = path.join(ROOT, "storage");

/** Copies .env.example to .env on first start and fills NEXTAUTH_SECRET when empty. */
function prepareEnvFile() {
  if (!fs.existsSync(ENV_FILE)) {
    fs.copyFileSync(EXAMPLE_FILE, ENV_FILE);
    log("config", "created .env from .env.example (edit .env to change ports and settings)");
  }
  const text = fs.readFileSync(ENV_FILE, "utf8");
  if (!readDotEnv(ENV_FILE).NEXTAUTH_SECRET) {
    const secret = randomBytes(32).toString("base64url");
    const next = /^NEXTAUTH_SECRET=.*$/m.test(text)
      ? text.replace(/^NEXTAUTH_SECRET=.*$/m, `NEXTAUTH_SECRET=${secret}`)
      : `${text.replace(/\n?$/, "\n")}NEXTAUTH_SECRET=${secret}\n`;
    fs.writeFileSync(ENV_FILE, next, { mode: 0o600 });
    log("config", "generated NEXTAUTH_SECRET in .env (kept for later starts)");
  }
}

function loadEnv() {
  const fromFile = readDotEnv(fs.existsSync(ENV_FILE) ? ENV_FILE : EXAMPLE_FILE);
  const env = { ...fromFile };
  for (const [k, v] of Object.entries(process.env)) if (v !== undefined) env[k] = v;
  env.NEXT_TELEMETRY_DISABLED = "1";
  // The AWS SDK is locked to a release that supports Node 20 (see STACK.md); its notice is noise here.
  env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= "true";
  const port = (name) => {
    const raw = env[name];
    const n = Number(raw);
    if (!raw || !Number.isInteger(n) || n <= 0 || n > 65535) throw new UserFacingError(`${name} must be a port number in .env (got "${raw ?? ""}").`);
    return { port: n, variable: name };
  };
  const ports = { APP: port("APP_PORT"), PG: port("PG_PORT"), S3: port("S3_PORT"), SMTP: port("SMTP_PORT") };
  for (const name of ["DATABASE_URL", "NEXTAUTH_URL", "S3_ENDPOINT", "S3_BUCKET", "SMTP_HOST"]) {
    if (!env[name]) throw new UserFacingError(`${name} is empty in .env (see .env.example for its default).`);
  }
  const s3Url = new URL(env.S3_ENDPOINT);
  if (localServices(env).s3 && Number(s3Url.port || 80) !== ports.S3.port) throw new UserFacingError(`S3_ENDPOINT (${env.S3_ENDPOINT}) and S3_PORT (${ports.S3.port}) disagree in .env.`);
  const appUrl = new URL(env.NEXTAUTH_URL);
  if (Number(appUrl.port || 80) !== ports.APP.port) throw new UserFacingError(`NEXTAUTH_URL (${env.NEXTAUTH_URL}) and APP_PORT (${ports.APP.port}) disagree in .env.`);
  return { env, ports };
}

/** The ports this start will listen on (external services are not started, so not checked). */
function portsToCheck(env, ports) {
  const local = localServices(env);
  return [
    { ...ports.APP, service: "web app", related: "NEXTAUTH_URL" },
    local.pg && { ...ports.PG, service: "PostgreSQL", related: "DATABASE_URL" },
    local.s3 && { ...ports.S3, service: "S3 (s3rver)", related: "S3_ENDPOINT" },
    local.smtp && { ...ports.SMTP, service: "SMTP sink" },
  ].filter(Boolean);
}

function printBanner(url, seconds) {
  let accounts = [];
  let workspace = "";
  try {
    const demo = JSON.parse(fs.readFileSync(path.join(ROOT, "seeders", "demo-accounts.json"), "utf8"));
    accounts = demo.accounts ?? [];
    workspace = demo.workspace?.name ?? "";
  } catch {
    // no demo accounts file: nothing to print
  }
  const lines = ["", `${green("Tessera is running")} at ${bold(url)}  (up in ${seconds} s)`];
  if (accounts.length) {
    lines.push("", `Demo accounts${workspace ? ` (${workspace})` : ""}:`);
    const width = Math.max(...accounts.map((a) => a.email.length));
    for (const a of accounts) lines.push(`  ${a.role.padEnd(11)} ${a.email.padEnd(width)}  ${a.password}`);
  }
  lines.push("", "Data lives under storage/. Press Ctrl-C to stop everything.", "");
  process.stdout.write(lines.join("\n") + "\n");
}

async function main() {
  const started = Date.now();
  if (checkOnly) {
    const { env, ports } = loadEnv();
    await assertPortsFree(portsToCheck(env, ports), "in .env (or in the environment, which wins over .env)");
    log("check", "configuration read; all ports are free");
    return 0;
  }

  await ensureNodeModules();
  prepareEnvFile();
  const { env, ports } = loadEnv();
  fs.mkdirSync(STORAGE, { recursive: true });

  const pidFile = path.join(STORAGE, ".start-pids");
  await killStaleChildren(pidFile);
  await stopStalePostgres(path.join(STORAGE, "postgres"));
  await assertPortsFree(portsToCheck(env, ports), "in .env");

  const supervisor = new Supervisor({ pidFile });
  let exiting = false;
  const stopAndExit = async (code) => {
    if (exiting) return;
    exiting = true;
    await supervisor.stopAll();
    log("tessera", "stopped");
    process.exit(code);
  };
  installSignalHandlers(supervisor, () => stopAndExit(0));
  supervisor.onUnexpectedExit = (record) => {
    log("tessera", red(`${record.name} exited unexpectedly (${record.signal ?? `exit ${record.code}`}); stopping everything`));
    void stopAndExit(1);
  };

  const stack = { env, storageDir: STORAGE, ports, supervisor };
  try {
    await startServices(stack);
    await migrateAndSeed(stack);
    await seedDemoData(stack);
    await buildIfNeeded({ env });
    await startWorker(stack);
    const { url } = await startNext(stack);
    printBanner(env.NEXTAUTH_URL || url, Math.round((Date.now() - started) / 1000));
  } catch (err) {
    process.stderr.write(`${red("Start failed:")} ${err instanceof UserFacingError ? err.message : err.stack}\n`);
    await stopAndExit(1);
  }
  return null; // keep running until a signal
}

main().then(
  (code) => {
    if (typeof code === "number") process.exit(code);
  },
  (err) => {
    process.stderr.write(`${red("Start failed:")} ${err instanceof UserFacingError ? err.message : err.stack}\n`);
    process.exit(1);
  },
);
