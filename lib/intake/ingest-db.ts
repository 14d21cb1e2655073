import pg from "pg";
import { env } from "@/lib/config/env";

// A small raw pg pool beside Sequelize's: COPY (pg-copy-streams) needs a plain
// client, and ingest must run COPY and the version's state change on that one
// client inside one transaction. Kept on globalThis so `next dev` reloads reuse it.
const globalForPool = globalThis as unknown as { tesseraIntakePool?: pg.Pool };

export function intakePool(): pg.Pool {
  if (!globalForPool.tesseraIntakePool) {
    const pool = new pg.Pool({ connectionString: env().DATABASE_URL, max: 4, idleTimeoutMillis: 10_000, application_name: "tessera-intake" });
    pool.on("error", (err) => console.error(`[intake pg pool] ${err.message}`));
    globalForPool.tesseraIntakePool = pool;
  }
  return globalForPool.tesseraIntakePool;
}

/** Closes the pool (tests, scripts). */
export async function closeIntakePool(): Promise<void> {
  const pool = globalForPool.tesseraIntakePool;
  globalForPool.tesseraIntakePool = undefined;
  await pool?.end();
}

/** Runs `work` inside BEGIN … COMMIT on one client; any throw rolls everything back. */
export async function inTransaction<T>(work: (client: pg.PoolClient) => Promise<T>): Promise<T> {
  const client = await intakePool().connect();
  try {
    await client.query("BEGIN");
    const result = await work(client);
    await client.query("COMMIT");
    return result;
  } catch (err) {
    await client.query("ROLLBACK").catch(() => undefined);
    throw err;
  } finally {
    client.release();
  }
}
