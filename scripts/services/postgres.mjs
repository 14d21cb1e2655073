// A private PostgreSQL cluster for Tessera: Debian's server binaries, data under
// a folder the caller chooses (storage/postgres, storage/test/postgres), TCP on
// 127.0.0.1 only and no Unix socket (a socket file inside the project crashes
// Turbopack's file watcher).
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { HOST, ROOT, UserFacingError, aptInstall, log, run, sleep } from "./util.mjs";

const TAG = "postgres";
const isRoot = typeof process.getuid === "function" && process.getuid() === 0;

/** Newest /usr/lib/postgresql/<v>/bin that has initdb, or null. */
export function findPostgresBin() {
  const base = "/usr/lib/postgresql";
  if (!fs.existsSync(base)) return null;
  const versions = fs
    .readdirSync(base)
    .filter((v) => fs.existsSync(path.join(base, v, "bin", "initdb")))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(base, versions[0], "bin") : null;
}

/** Installs Debian's `postgresql` when the server binaries are missing. */
export async function ensurePostgresInstalled() {
  let bin = findPostgresBin();
  if (bin) return bin;
  // We run our own cluster; stop the package from creating and starting its default one.
  try {
    fs.mkdirSync("/etc/postgresql-common/createcluster.d", { recursive: true });
    fs.writeFileSync("/etc/postgresql-common/createcluster.d/tessera.conf", "create_main_cluster = false\n");
  } catch {
    // not root: aptInstall below explains what to do
  }
  await aptInstall(["postgresql"], TAG);
  bin = findPostgresBin();
  if (!bin) throw new UserFacingError("apt-get installed postgresql but no /usr/lib/postgresql/*/bin/initdb was found.");
  return bin;
}

/**
 * Stops a server left running on this data folder by an earlier run that was
 * killed before it could clean up (call before checking ports).
 */
export async function stopStalePostgres(dataRoot) {
  const dataDir = path.join(dataRoot, "data");
  const bin = findPostgresBin();
  if (!bin || !fs.existsSync(path.join(dataDir, "postmaster.pid"))) return false;
  const running = await asPostgres(bin, "pg_ctl", ["status", "-D", dataDir]).then(() => true, () => false);
  if (!running) return false;
  log(TAG, `a server from an earlier run is still running on ${path.relative(ROOT, dataDir)}; stopping it`);
  await asPostgres(bin, "pg_ctl", ["stop", "-D", dataDir, "-m", "fast", "-w", "-t", "60"]);
  return true;
}

/** Parses a postgres:// URL into the parts we need; names the variable on error. */
export function parseDatabaseUrl(url, variable = "DATABASE_URL") {
  let u;
  try {
    u = new URL(url);
  } catch {
    throw new UserFacingError(`${variable} is not a valid URL: ${url}`);
  }
  if (!/^postgres(ql)?:$/.test(u.protocol)) throw new UserFacingError(`${variable} must start with postgres:// (got ${u.protocol}//).`);
  const database = decodeURIComponent(u.pathname.replace(/^\//, ""));
  if (!database) throw new UserFacingError(`${variable} names no database (expected …/<database> at the end).`);
  return {
    user: decodeURIComponent(u.username || "tessera"),
    password: decodeURIComponent(u.password || ""),
    host: u.hostname,
    port: Number(u.port || 5432),
    database,
  };
}

const quoteIdent = (s) => `"${s.replace(/"/g, '""')}"`;
const quoteLiteral = (s) => `'${s.replace(/'/g, "''")}'`;

async function postgresUser() {
  const uid = Number((await run("id", ["-u", "postgres"]).catch(() => ({ stdout: "" }))).stdout.trim());
  const gid = Number((await run("id", ["-g", "postgres"]).catch(() => ({ stdout: "" }))).stdout.trim());
  if (!Number.isInteger(uid) || !uid) throw new UserFacingError("The system user `postgres` does not exist (it comes with Debian's postgresql package).");
  return { uid, gid };
}

/** Runs a PostgreSQL binary as the `postgres` user when we are root (the server refuses root). */
function asPostgres(bin, cmd, args, opts = {}) {
  const exe = path.join(bin, cmd);
  return isRoot ? run("runuser", ["-u", "postgres", "--", exe, ...args], opts) : run(exe, args, opts);
}

/**
 * Starts (initialising on first use) a private cluster and makes sure the role
 * and database of `databaseUrl` exist. Registers `pg_ctl stop` with the supervisor.
 *
 * @param {{dataRoot:string, port:number, portVariable:string, databaseUrl:string, supervisor:import('./supervisor.mjs').Supervisor, fast?:boolean}} o
 */
export async function startPostgres({ dataRoot, port, portVariable = "PG_PORT", databaseUrl, supervisor, fast = false }) {
  const target = parseDatabaseUrl(databaseUrl);
  if (target.port !== port || !["127.0.0.1", "localhost"].includes(target.host)) {
    throw new UserFacingError(
      `DATABASE_URL (${target.host}:${target.port}) does not point at the local cluster on ${HOST}:${port} (${portVariable}); make them agree.`,
    );
  }
  const bin = await ensurePostgresInstalled();
  const dataDir = path.join(dataRoot, "data");
  const logFile = path.join(dataRoot, "server.log");

  fs.mkdirSync(dataRoot, { recursive: true });
  if (isRoot) {
    const { uid, gid } = await postgresUser();
    fs.chownSync(dataRoot, uid, gid);
    fs.chmodSync(dataRoot, 0o700);
    try {
      await run("runuser", ["-u", "postgres", "--", "test", "-w", dataRoot]);
    } catch {
      throw new UserFacingError(
        `The postgres user cannot write ${dataRoot}: every folder above it must be enterable by others (chmod o+x), or move the project.`,
      );
    }
  }

  if (!fs.existsSync(path.join(dataDir, "PG_VERSION"))) {
    log(TAG, `initialising a new cluster in ${path.relative(ROOT, dataDir)}`);
    const pwFile = path.join(dataRoot, ".initdb-pw");
    fs.writeFileSync(pwFile, randomBytes(24).toString("hex") + "\n", { mode: 0o600 });
    if (isRoot) {
      const { uid, gid } = await postgresUser();
      fs.chownSync(pwFile, uid, gid);
    }
    try {
      await asPostgres(bin, "initdb", ["-D", dataDir, "-U", "postgres", "-A", "scram-sha-256", `--pwfile=${pwFile}`, "-E", "UTF8", "--locale=C", ...(fast ? ["--no-sync"] : [])]);
    } finally {
      fs.rmSync(pwFile, { force: true });
    }
    const settings = [
      "",
      "# Tessera: loopback TCP only, no Unix socket.",
      "listen_addresses = '127.0.0.1'",
      "unix_socket_directories = ''",
      "max_connections = 100",
      ...(fast ? ["# Throwaway test cluster: durability traded for speed.", "fsync = off", "synchronous_commit = off", "full_page_writes = off"] : []),
    ];
    fs.appendFileSync(path.join(dataDir, "postgresql.conf"), settings.join("\n") + "\n");
  }

  await stopStalePostgres(dataRoot);

  // Role with the URL's name and password, set in single-user mode (no network, no superuser password).
  const roleSql =
    `DO $$BEGIN IF NOT EXISTS (SELECT FROM pg_roles WHERE rolname = ${quoteLiteral(target.user)}) ` +
    `THEN CREATE ROLE ${quoteIdent(target.user)} LOGIN CREATEDB PASSWORD ${quoteLiteral(target.password)}; ` +
    `ELSE ALTER ROLE ${quoteIdent(target.user)} LOGIN CREATEDB PASSWORD ${quoteLiteral(target.password)}; END IF; END$$;\n`;
  await asPostgres(bin, "postgres", ["--single", "-D", dataDir, "-c", "unix_socket_directories=", "-c", "listen_addresses=", "postgres"], { input: roleSql });

  log(TAG, `starting on ${HOST}:${port} (log: ${path.relative(ROOT, logFile)})`);
  try {
    await asPostgres(bin, "pg_ctl", ["start", "-w", "-t", "60", "-D", dataDir, "-l", logFile, "-o", `-p ${port} -c listen_addresses=${HOST} -c unix_socket_directories=''`]);
  } catch (err) {
    const tail = fs.existsSync(logFile) ? fs.readFileSync(logFile, "utf8").trim().split("\n").slice(-8).join("\n") : "";
    throw new UserFacingError(`PostgreSQL did not start on ${HOST}:${port} (${portVariable}): ${err.message}${tail ? `\n${tail}` : ""}`);
  }
  supervisor.defer(TAG, async () => {
    log(TAG, "stopping (pg_ctl stop -m fast)");
    await asPostgres(bin, "pg_ctl", ["stop", "-D", dataDir, "-m", "fast", "-w", "-t", "60"]).catch((err) => {
      if (!/Is server running|PID file .* does not exist/i.test(err.message)) throw err;
    });
  });

  await ensureDatabase(target);
  log(TAG, `ready: database ${target.database} as ${target.user} on ${HOST}:${port}`);
  return { bin, dataDir, logFile };
}

/** Creates the URL's database when missing (as the app role, which has CREATEDB). */
async function ensureDatabase(target) {
  const { default: pg } = await import("pg");
  const client = new pg.Client({ host: HOST, port: target.port, user: target.user, password: target.password, database: "postgres" });
  for (let attempt = 0; ; attempt++) {
    try {
      await client.connect();
      break;
    } catch (err) {
      if (attempt >= 20) throw new UserFacingError(`Cannot connect to PostgreSQL on ${HOST}:${target.port} as ${target.user}: ${err.message}`);
      await sleep(250);
    }
  }
  try {
    const { rowCount } = await client.query("SELECT 1 FROM pg_database WHERE datname = $1", [target.database]);
    if (!rowCount) {
      try {
        await client.query(`CREATE DATABASE ${quoteIdent(target.database)} OWNER ${quoteIdent(target.user)} ENCODING 'UTF8' TEMPLATE template0`);
        log(TAG, `created database ${target.database}`);
      } catch (err) {
        if (err.code !== "42P04") throw err; // created meanwhile by someone else
      }
    }
  } finally {
    await client.end();
  }
}
