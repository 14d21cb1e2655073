// The bring-up shared by `npm start` and `npm test`: PostgreSQL, s3rver and the
// SMTP sink, then migrations and seeders, then (optionally) the worker and
// `next start`. Every step registers its stop with the supervisor.
import path from "node:path";
import { startPostgres } from "./postgres.mjs";
import { HOST, ROOT, UserFacingError, log, run, waitForHttp, waitForPort } from "./util.mjs";

const BIN = path.join(ROOT, "node_modules", ".bin");

/**
 * @typedef {{
 *   env: Record<string,string>,            // environment for every child (ports, URLs, secrets)
 *   storageDir: string,                    // storage/ or storage/test/
 *   ports: {APP: {port:number, variable:string}, PG: {port:number, variable:string}, S3: {port:number, variable:string}, SMTP: {port:number, variable:string}},
 *   supervisor: import('./supervisor.mjs').Supervisor,
 *   logDir?: string,                       // children log to files here instead of the terminal
 *   fastPostgres?: boolean,
 * }} Stack
 */

function childLog(stack, name) {
  return stack.logDir ? path.join(stack.logDir, `${name}.log`) : undefined;
}

const LOOPBACK = new Set(["127.0.0.1", "localhost", "::1", "[::1]"]);

/**
 * Which services run locally. A DATABASE_URL, S3_ENDPOINT or SMTP_HOST that
 * points elsewhere means "use that one": nothing is started for it.
 */
export function localServices(env) {
  const host = (url) => {
    try {
      return new URL(url).hostname;
    } catch {
      return "";
    }
  };
  return {
    pg: LOOPBACK.has(host(env.DATABASE_URL)),
    s3: LOOPBACK.has(host(env.S3_ENDPOINT)),
    smtp: LOOPBACK.has(env.SMTP_HOST ?? ""),
  };
}

/** PostgreSQL + s3rver + SMTP sink (those that are local). */
export async function startServices(stack) {
  const { env, storageDir, ports, supervisor } = stack;
  const local = localServices(env);
  if (local.pg) {
    await startPostgres({
      dataRoot: path.join(storageDir, "postgres"),
      port: ports.PG.port,
      portVariable: ports.PG.variable,
      databaseUrl: env.DATABASE_URL,
      supervisor,
      fast: Boolean(stack.fastPostgres),
    });
  } else {
    const u = new URL(env.DATABASE_URL);
    await waitForPort(Number(u.port || 5432), { host: u.hostname, what: `PostgreSQL from DATABASE_URL (${u.hostname})`, timeoutMs: 10_000 });
    log("services", `using the external PostgreSQL at ${u.hostname}:${u.port || 5432} (DATABASE_URL)`);
  }

  let s3 = null;
  if (local.s3) {
    const origin = new URL(env.NEXTAUTH_URL).origin;
    const origins = [...new Set([origin, origin.replace("127.0.0.1", "localhost"), origin.replace("localhost", "127.0.0.1")])];
    s3 = supervisor.spawn("s3rver", process.execPath, [path.join(ROOT, "scripts/services/s3-server.mjs")], {
      env: { ...env, S3_DIR: path.join(storageDir, "s3"), S3_CORS_ORIGINS: origins.join(",") },
      logFile: childLog(stack, "s3rver"),
      ipc: true,
    });
  } else {
    log("services", `using the external S3 at ${env.S3_ENDPOINT} (S3_ENDPOINT); bucket ${env.S3_BUCKET} and its CORS rule must exist there`);
  }
  let smtp = null;
  // The app shows its Outbox page only while SMTP_PORT is this port (lib/mail/outbox-gate.ts).
  if (local.smtp) env.SMTP_SINK_PORT = String(ports.SMTP.port);
  else delete env.SMTP_SINK_PORT;
  if (local.smtp) {
    smtp = supervisor.spawn("smtp-sink", process.execPath, [path.join(ROOT, "scripts/services/smtp-sink.mjs")], {
      env,
      logFile: childLog(stack, "smtp-sink"),
      ipc: true,
    });
  } else {
    log("services", `sending mail through ${env.SMTP_HOST}:${env.SMTP_PORT} (SMTP_HOST); the Outbox page stays empty`);
  }
  if (s3) await waitForPort(ports.S3.port, { what: `s3rver (${ports.S3.variable}=${ports.S3.port})`, alive: () => !s3.exited, timeoutMs: 20_000 });
  if (smtp) await waitForPort(ports.SMTP.port, { what: `SMTP sink (${ports.SMTP.variable}=${ports.SMTP.port})`, alive: () => !smtp.exited, timeoutMs: 20_000 });
  if (s3 || smtp) {
    log(
      "services",
      [s3 && `s3rver on http://${HOST}:${ports.S3.port} (bucket ${env.S3_BUCKET})`, smtp && `SMTP sink on ${HOST}:${ports.SMTP.port}`].filter(Boolean).join(", "),
    );
  }
}

/** sequelize-cli db:migrate, then db:seed:all (seeders are idempotent; applied ones are recorded). */
export async function migrateAndSeed(stack) {
  const { env } = stack;
  const cli = path.join(BIN, "sequelize-cli");
  const started = Date.now();
  try {
    const { stdout } = await run(cli, ["db:migrate"], { env });
    const applied = stdout.split("\n").filter((l) => /migrated/.test(l)).length;
    log("db", applied ? `applied ${applied} migration(s)` : "migrations up to date");
  } catch (err) {
    throw new UserFacingError(`Migrations failed (npx sequelize-cli db:migrate): ${err.message}`);
  }
  try {
    const { stdout } = await run(cli, ["db:seed:all"], { env });
    const seeded = stdout.split("\n").filter((l) => /migrated/.test(l)).length;
    log("db", seeded ? `ran ${seeded} seeder(s)` : "seeders up to date");
  } catch (err) {
    throw new UserFacingError(`Seeding failed (npx sequelize-cli db:seed:all): ${err.message}`);
  }
  log("db", `migrate + seed took ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

/**
 * The Veldmark demo data through the real intake path, then a completed demo
 * run, so a newcomer sees filled screens at first start. Both scripts are
 * idempotent: on later starts they find their work done and return quickly.
 */
export async function seedDemoData(stack) {
  const { env } = stack;
  const tsx = path.join(BIN, "tsx");
  const started = Date.now();
  for (const [script, what] of [
    ["scripts/demo/seed-demo-data.ts", "demo boundaries and panel"],
    ["scripts/demo/run-demo-analysis.ts", "demo analysis run"],
    // After the demo run, so the run keeps its panel: the invented 2019 district reform and the harmonised panel.
    ["scripts/demo/seed-demo-reform.ts", "demo boundary reform"],
  ]) {
    try {
      await run(tsx, [path.join(ROOT, script)], { env });
    } catch (err) {
      throw new UserFacingError(`Seeding the ${what} failed (npx tsx ${script}): ${err.message}`);
    }
  }
  log("db", `demo data and demo run ready in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

/** `npm run worker` equivalent. Resolves once it logged that it is ready. */
export async function startWorker(stack, name = "worker") {
  const { env, supervisor } = stack;
  const logFile = childLog(stack, name);
  const record = supervisor.spawn(name, path.join(BIN, "tsx"), [path.join(ROOT, "worker/main.ts")], { env, logFile, stopTimeoutMs: 30_000 });
  try {
    await record.waitForLine(/\] ready:/, 60_000);
  } catch (err) {
    throw new UserFacingError(`The worker did not start: ${err.message}${logFile ? ` (see ${path.relative(ROOT, logFile)})` : ""}.`);
  }
  return record;
}

/** `next start -H 127.0.0.1 -p APP_PORT`; resolves when it answers HTTP. */
export async function startNext(stack) {
  const { env, ports, supervisor } = stack;
  const record = supervisor.spawn("next", path.join(BIN, "next"), ["start", "-H", HOST, "-p", String(ports.APP.port)], {
    env: { ...env, NODE_ENV: "production" },
    logFile: childLog(stack, "next"),
  });
  const url = `http://${HOST}:${ports.APP.port}`;
  await waitForHttp(url, { what: "next start", alive: () => !record.exited, timeoutMs: 90_000 });
  return { record, url };
}
