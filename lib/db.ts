import pg from "pg";
import { Sequelize } from "sequelize";
import { env } from "@/lib/config/env";
import { unavailableDigest } from "@/lib/service-unavailable";

// One Sequelize instance per process; kept on globalThis so `next dev` reloads
// do not open a new pool each time.
const globalForDb = globalThis as unknown as { tesseraSequelize?: Sequelize };

/** How long a request waits for a new connection or a free pool slot before it gives up with a 503. */
const CONNECT_TIMEOUT_MS = 5_000;
const ACQUIRE_TIMEOUT_MS = 10_000;

export function db(): Sequelize {
  if (!globalForDb.tesseraSequelize) {
    const sequelize = new Sequelize(env().DATABASE_URL, {
      dialect: "postgres",
      dialectModule: pg,
      logging: false,
      // A server restart kills every pooled connection. Sequelize destroys a
      // connection on its "error" event; `validate` also refuses one that pg has
      // already marked unusable, so no request is handed a dead socket, and
      // `evict` drops idle ones every second.
      pool: { max: 10, min: 0, idle: 10_000, acquire: ACQUIRE_TIMEOUT_MS, evict: 1_000, validate: connectionUsable },
      dialectOptions: { connectionTimeoutMillis: CONNECT_TIMEOUT_MS, keepAlive: true },
    });
    markOutages(sequelize);
    globalForDb.tesseraSequelize = sequelize;
  }
  return globalForDb.tesseraSequelize;
}

/** A connection of the pool for reading; an outage while getting it is marked as one. */
async function readConnection(): Promise<pg.ClientBase> {
  try {
    return (await db().connectionManager.getConnection({ type: "read" })) as pg.ClientBase;
  } catch (error) {
    throw markIfDatabaseUnavailable(error);
  }
}

/**
 * A read whose rows come back as arrays in column order, on a connection from
 * the same pool (so the same limits, validation and outage marking apply).
 * For large reads that go to the client as tuples: Sequelize builds one object
 * per row, which at 10,000 rows costs more than the query.
 */
export async function selectTuples<Row extends unknown[]>(text: string, values: readonly unknown[]): Promise<Row[]> {
  const manager = db().connectionManager;
  const connection = await readConnection();
  try {
    const result = await connection.query<Row>({ text, values: [...values], rowMode: "array" });
    return result.rows;
  } catch (error) {
    throw markIfDatabaseUnavailable(error);
  } finally {
    manager.releaseConnection(connection);
  }
}

/**
 * A read too large to hold at once, in batches of at most `batchSize` rows
 * (arrays in column order): a server-side cursor (DECLARE … FETCH) inside a
 * read-only transaction on one connection of the pool, held until the
 * generator ends. Stopping early (`return()` on the generator, e.g. when the
 * client of a streamed answer goes away) closes the cursor and hands the
 * connection back. PostgreSQL's snapshot makes the batches one consistent read.
 */
export async function* streamTuples<Row extends unknown[]>(text: string, values: readonly unknown[], batchSize = 1_000): AsyncGenerator<Row[], void, undefined> {
  const manager = db().connectionManager;
  const connection = await readConnection();
  let open = false;
  let failed = false;
  try {
    await connection.query("BEGIN READ ONLY");
    open = true;
    await connection.query({ text: `DECLARE tessera_stream NO SCROLL CURSOR FOR ${text}`, values: [...values] });
    for (;;) {
      const result = await connection.query<Row>({ text: `FETCH FORWARD ${Math.max(1, Math.floor(batchSize))} FROM tessera_stream`, rowMode: "array" });
      if (result.rows.length === 0) break;
      yield result.rows;
      if (result.rows.length < batchSize) break;
    }
  } catch (error) {
    failed = true;
    throw markIfDatabaseUnavailable(error);
  } finally {
    // Ending the transaction closes the cursor; a connection that cannot even do that is not handed back.
    if (open) await connection.query(failed ? "ROLLBACK" : "COMMIT").catch(() => ((connection as PooledClient)._invalid = true));
    manager.releaseConnection(connection);
  }
}

type PooledClient = { _invalid?: boolean; _ending?: boolean; _queryable?: boolean };

function connectionUsable(connection: unknown): boolean {
  const c = connection as PooledClient;
  return !c._invalid && !c._ending && c._queryable !== false;
}

// Node socket errors and PostgreSQL SQLSTATEs that mean "the server is not
// there right now": class 08 (connection exception), 57P01 admin shutdown,
// 57P02 crash shutdown, 57P03 cannot connect now (starting or stopping).
const NETWORK_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EHOSTUNREACH", "ENETUNREACH", "ENOTFOUND", "EAI_AGAIN", "EPIPE"]);
const OUTAGE_SQLSTATE = /^(08[0-9A-Z]{3}|57P0[123])$/;
const OUTAGE_ERROR_NAMES = new Set([
  "TesseraDatabaseUnavailableError",
  "SequelizeConnectionRefusedError",
  "SequelizeConnectionTimedOutError",
  "SequelizeConnectionAcquireTimeoutError",
  "SequelizeHostNotFoundError",
  "SequelizeHostNotReachableError",
]);
// pg reports a socket that died under it by message only.
const OUTAGE_MESSAGES = /Connection terminated|connection error and is not queryable|timeout exceeded when trying to connect|Client was closed and is not queryable/i;

/**
 * True when `error` (a Sequelize error, a pg error, or anything wrapping one
 * as parent/original/cause) says the database is unreachable, restarting or
 * shutting down — a condition that passes — rather than a bad query or data.
 */
export function isDatabaseUnavailable(error: unknown): boolean {
  const seen = new Set<unknown>();
  const stack: unknown[] = [error];
  while (stack.length) {
    const e = stack.pop();
    if (!e || typeof e !== "object" || seen.has(e) || seen.size > 10) continue;
    seen.add(e);
    const o = e as { name?: unknown; code?: unknown; message?: unknown; parent?: unknown; original?: unknown; cause?: unknown; errors?: unknown };
    if (typeof o.name === "string" && OUTAGE_ERROR_NAMES.has(o.name)) return true;
    if (typeof o.code === "string" && (NETWORK_CODES.has(o.code) || OUTAGE_SQLSTATE.test(o.code))) return true;
    if (typeof o.message === "string" && OUTAGE_MESSAGES.test(o.message)) return true;
    stack.push(o.parent, o.original, o.cause);
    if (Array.isArray(o.errors)) stack.push(...o.errors);
  }
  return false;
}

/**
 * An outage met where the driver's own error cannot travel on, e.g. through
 * next-auth's session callback, whose errors next-auth swallows.
 */
export class DatabaseUnavailableError extends Error {
  override name = "TesseraDatabaseUnavailableError";
}

/** Stamps the outage digest on `error` when it is an outage (see lib/service-unavailable.ts), and returns it. */
export function markIfDatabaseUnavailable<E>(error: E): E {
  if (isDatabaseUnavailable(error) && error && typeof error === "object" && !("digest" in error)) {
    Object.defineProperty(error, "digest", { value: unavailableDigest("database"), enumerable: false, configurable: true });
  }
  return error;
}

type AnyAsync = (...args: unknown[]) => Promise<unknown>;

/**
 * Every model call goes through `query`; `transaction` also opens its own
 * connection first. Wrapping both marks outage errors wherever they arise, so
 * pages (whose messages Next hides in production) can still say the database
 * is down.
 */
function markOutages(sequelize: Sequelize): void {
  const target = sequelize as unknown as { query: AnyAsync; transaction: AnyAsync };
  for (const method of ["query", "transaction"] as const) {
    const original = target[method].bind(sequelize) as AnyAsync;
    target[method] = (...args: unknown[]) =>
      original(...args).catch((error: unknown) => {
        throw markIfDatabaseUnavailable(error);
      });
  }
}
