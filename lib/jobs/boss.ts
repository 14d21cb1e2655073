import PgBoss from "pg-boss";
import { z } from "zod";
import { env } from "@/lib/config/env";
import { DEFAULT_QUEUE_SETTINGS, QUEUE_NAMES, QUEUE_SCHEDULES, queueSettings } from "@/lib/jobs/queues";

export type BossRole = "sender" | "worker";

const jobsSchemaSchema = z
  .string()
  .regex(/^[a-z_][a-z0-9_]{0,49}$/, "must be a lower-case PostgreSQL name of at most 50 characters (letters, digits, _)")
  .default("pgboss");

/**
 * The PostgreSQL schema holding pg-boss's tables: JOBS_SCHEMA, default
 * `pgboss`. The web app and the workers that share jobs must use the same
 * one; a separate schema is a separate set of queues on the same database
 * (tests use one to own every worker that serves their jobs).
 */
export function jobsSchema(): string {
  const parsed = jobsSchemaSchema.safeParse(process.env.JOBS_SCHEMA || undefined);
  if (!parsed.success) throw new Error(`JOBS_SCHEMA "${process.env.JOBS_SCHEMA}": ${parsed.error.issues[0]?.message}`);
  return parsed.data;
}

type BossState = { boss?: PgBoss; starting?: Promise<PgBoss>; role?: BossRole };
const globalForBoss = globalThis as unknown as { tesseraBoss?: BossState };
const state: BossState = (globalForBoss.tesseraBoss ??= {});

/**
 * The process-wide pg-boss instance on the app database (schema jobsSchema()),
 * started and with every queue of queues.ts created and up to date (pg-boss 10
 * requires createQueue before send/work; createQueue is idempotent).
 *
 * A "sender" (the web app, tests) neither supervises nor schedules; the first
 * call decides the role. Workers call getBoss("worker").
 */
export async function getBoss(role: BossRole = "sender"): Promise<PgBoss> {
  if (state.boss) return state.boss;
  if (!state.starting) {
    state.role = role;
    state.starting = (async () => {
      const boss = new PgBoss({
        connectionString: env().DATABASE_URL,
        schema: jobsSchema(),
        application_name: `tessera-${role}`,
        max: role === "worker" ? 4 : 2,
        supervise: role === "worker",
        schedule: role === "worker",
        migrate: true,
      });
      boss.on("error", (err: Error) => console.error(`[pg-boss] ${err.message}`));
      await boss.start();
      for (const name of QUEUE_NAMES) {
        const settings = { name, ...DEFAULT_QUEUE_SETTINGS, ...queueSettings[name] };
        await boss.createQueue(name, settings);
        // createQueue leaves an existing queue as it was; this brings retry and
        // expiry settings changed in queues.ts to databases made before the change.
        await boss.updateQueue(name, settings);
      }
      // pg-boss keeps one schedule per queue name (re-registering replaces it); only workers register them.
      if (role === "worker") {
        for (const s of QUEUE_SCHEDULES) await boss.schedule(s.queue, s.cron, s.data, { tz: "UTC" });
      }
      state.boss = boss;
      return boss;
    })().catch((err: unknown) => {
      state.starting = undefined;
      const reason = err instanceof Error ? err.message : String(err);
      throw new Error(`pg-boss could not start on DATABASE_URL (${redact(env().DATABASE_URL)}): ${reason}`);
    });
  }
  return state.starting;
}

/** Stops the instance if one was started (graceful: waits for active jobs up to timeoutMs). */
export async function stopBoss(timeoutMs = 20_000): Promise<void> {
  const pending = state.starting;
  state.boss = undefined;
  state.starting = undefined;
  if (!pending) return;
  const boss = await pending.catch(() => undefined);
  await boss?.stop({ graceful: true, wait: true, timeout: timeoutMs, close: true });
}

function redact(url: string): string {
  return url.replace(/\/\/([^:/@]+):[^@]*@/, "//$1:***@");
}
