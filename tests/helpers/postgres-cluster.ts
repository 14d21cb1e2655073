import { execFile } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { promisify } from "node:util";

// Stops and starts the suite's own PostgreSQL cluster (the one `npm test`
// brought up: data under TESSERA_TEST_DIR/postgres, port PG_PORT), the way
// scripts/services/postgres.mjs runs it: Debian's pg_ctl as the `postgres`
// user when we are root, TCP on 127.0.0.1 only, no Unix socket.

const run = promisify(execFile);
const isRoot = typeof process.getuid === "function" && process.getuid() === 0;

export interface TestCluster {
  pgCtl: string;
  dataDir: string;
  logFile: string;
  port: number;
}

export function testCluster(): TestCluster {
  const base = "/usr/lib/postgresql";
  const version = fs.existsSync(base)
    ? fs
        .readdirSync(base)
        .filter((v) => fs.existsSync(path.join(base, v, "bin", "pg_ctl")))
        .sort((a, b) => Number(b) - Number(a))[0]
    : undefined;
  if (!version) throw new Error(`No pg_ctl under ${base}/*/bin: Debian's postgresql is not installed.`);
  const dataRoot = path.resolve(process.env.TESSERA_TEST_DIR ?? path.join("storage", "test"), "postgres");
  const dataDir = path.join(dataRoot, "data");
  if (!fs.existsSync(path.join(dataDir, "PG_VERSION"))) throw new Error(`${dataDir} holds no PostgreSQL cluster: is this the data folder of the running \`npm test\` (TESSERA_TEST_DIR)?`);
  const port = Number(process.env.PG_PORT);
  if (!Number.isInteger(port) || port <= 0) throw new Error(`PG_PORT is not a port number (${process.env.PG_PORT}); run through \`npm test\`.`);
  return { pgCtl: path.join(base, version, "bin", "pg_ctl"), dataDir, logFile: path.join(dataRoot, "server.log"), port };
}

async function pgCtl(cluster: TestCluster, args: string[]): Promise<void> {
  const [cmd, argv] = isRoot ? ["runuser", ["-u", "postgres", "--", cluster.pgCtl, ...args]] : [cluster.pgCtl, args];
  try {
    await run(cmd, argv, { timeout: 90_000 });
  } catch (err) {
    const e = err as { stderr?: string; message: string };
    throw new Error(`pg_ctl ${args[0]} on ${cluster.dataDir} failed: ${(e.stderr || e.message).trim()}`);
  }
}

/** `pg_ctl stop -m fast`: every session is ended (57P01), new connections are refused. */
export async function stopCluster(cluster: TestCluster): Promise<void> {
  await pgCtl(cluster, ["stop", "-D", cluster.dataDir, "-m", "fast", "-w", "-t", "60"]);
}

/** Starts it again with the options scripts/services/postgres.mjs uses; resolves when it accepts connections. */
export async function startCluster(cluster: TestCluster): Promise<void> {
  await pgCtl(cluster, ["start", "-w", "-t", "60", "-D", cluster.dataDir, "-l", cluster.logFile, "-o", `-p ${cluster.port} -c listen_addresses=127.0.0.1 -c unix_socket_directories=''`]);
}

/** True while a postmaster runs on the data folder. */
export async function clusterRunning(cluster: TestCluster): Promise<boolean> {
  return pgCtl(cluster, ["status", "-D", cluster.dataDir]).then(
    () => true,
    () => false,
  );
}
