/**
 * Worker leases: how a job whose worker died is handed back promptly.
 *
 * pg-boss 10 records no owner for an active job; left alone, a job whose
 * worker was killed stays active until its expiry (expireInSeconds, checked
 * by pg-boss maintenance every two minutes) and only then is retried. Here
 * every worker registers in `job_workers`, holds an advisory lock on a
 * connection of its own for as long as it lives, refreshes a heartbeat, and
 * records each job it starts in `job_claims`. Every worker, when it starts
 * and at each heartbeat, looks for workers of its jobs schema presumed dead
 * (liveness.ts) and fails their claimed active jobs through pg-boss's own
 * `fail`, which retries them per the queue's retry settings. A job that is
 * active but claimed by nobody — its worker was killed in the instant between
 * pg-boss handing it over and the claim being written — is handed back once it
 * has gone unclaimed for a whole lease (WORKER_LEASE_SECONDS, 120 s by
 * default), where pg-boss alone would wait for its expiry (30 minutes).
 *
 * Handing a job back is safe for Tessera's handlers: each is idempotent
 * (a run piece replaces or skips its rows, a digest has an idempotency key,
 * intake re-validates a version from its stored file).
 */
import os from "node:os";
import { Client } from "pg";
import type PgBoss from "pg-boss";
import { QueryTypes } from "sequelize";
import { env } from "@/lib/config/env";
import { db } from "@/lib/db";
import { deadAfterSeconds, presumedDead, type LeaseSettings } from "./liveness";

/** First key of the two-int advisory lock a live worker holds; the second is its job_workers id. */
const LOCK_NAMESPACE = 0x5453_574b;
/** Second key (no worker has id 0) of the lock that lets one worker at a time sweep unclaimed jobs. */
const SWEEP_KEY = 0;

/** A job handed back because its worker died, and whether that was its last attempt. */
export interface HandedBackJob {
  queue: string;
  jobId: string;
  deadWorker: string;
  /** The job had no retries left: pg-boss marked it failed instead of retrying it. */
  finalAttempt: boolean;
  data: unknown;
}

export interface LeaseOptions {
  label: string;
  jobsSchema: string;
  /** The queues this worker serves: only their unclaimed jobs are swept. */
  queues: readonly string[];
  settings: LeaseSettings;
  log: (message: string) => void;
}

export class WorkerLease {
  private client: Client | null = null;
  private timer: NodeJS.Timeout | null = null;
  private ticking = false;
  private stopped = false;
  /** While our own lease connection was down, others may look dead to us only because the database was away. */
  private reapNotBefore = 0;

  private constructor(
    readonly id: number,
    private readonly options: LeaseOptions,
  ) {}

  get label(): string {
    return this.options.label;
  }

  /** Registers a worker and takes its lock. */
  static async register(options: LeaseOptions): Promise<WorkerLease> {
    // Rows of workers gone for a week are history nobody reads; their claims go with them.
    await db().query("DELETE FROM job_workers WHERE stopped_at < now() - interval '7 days'");
    const [row] = await db().query<{ id: number }>(
      "INSERT INTO job_workers (label, host, pid, jobs_schema, started_at, heartbeat_at) VALUES ($1, $2, $3, $4, now(), now()) RETURNING id",
      { bind: [options.label, os.hostname(), process.pid, options.jobsSchema], type: QueryTypes.SELECT },
    );
    const lease = new WorkerLease(row.id, options);
    await lease.connect();
    return lease;
  }

  private async connect(): Promise<void> {
    const client = new Client({ connectionString: env().DATABASE_URL, application_name: `tessera-worker-lease-${this.id}` });
    client.on("error", (err: Error) => this.drop(client, err.message));
    client.on("end", () => this.drop(client, "closed"));
    await client.connect();
    const { rows } = await client.query<{ locked: boolean }>("SELECT pg_try_advisory_lock($1, $2) AS locked", [LOCK_NAMESPACE, this.id]);
    if (!rows[0]?.locked) {
      await client.end().catch(() => undefined);
      throw new Error(`worker lease ${this.id} (${this.label}): its advisory lock is held by another session`);
    }
    this.client = client;
  }

  /** Forgets a broken lease connection; the next heartbeat opens a new one and takes the lock again. */
  private drop(client: Client, reason: string): void {
    if (this.client !== client) return;
    this.client = null;
    client.end().catch(() => undefined);
    if (!this.stopped) this.options.log(`lease connection lost (${reason}); reconnecting at the next heartbeat`);
  }

  /** Heartbeats (and reaps, through `onTick`) every heartbeatSeconds until stop(). */
  startHeartbeat(onTick: () => Promise<void>): void {
    const everyMs = this.options.settings.heartbeatSeconds * 1000;
    this.timer = setInterval(() => {
      if (this.ticking || this.stopped) return;
      this.ticking = true;
      this.heartbeat()
        .then(onTick)
        .catch((err: unknown) => this.options.log(`lease: ${err instanceof Error ? err.message : String(err)}`))
        .finally(() => (this.ticking = false));
    }, everyMs);
    this.timer.unref();
  }

  private async heartbeat(): Promise<void> {
    if (!this.client) {
      await this.connect();
      this.reapNotBefore = Date.now() + deadAfterSeconds(this.options.settings) * 1000;
      this.options.log("lease connection restored");
    }
    const client = this.client;
    if (!client) return;
    const { rows } = await client
      .query<{ stop_reason: string | null }>("UPDATE job_workers SET heartbeat_at = now() WHERE id = $1 RETURNING stop_reason", [this.id])
      .catch((err: Error) => {
        this.drop(client, err.message);
        throw err;
      });
    if (rows[0]?.stop_reason) {
      // Another worker presumed us dead and handed our jobs back; they will run again elsewhere (harmless: handlers are idempotent).
      this.options.log(`lease: another worker presumed this one dead (${rows[0].stop_reason}); working on`);
      await client.query("UPDATE job_workers SET stopped_at = NULL, stop_reason = NULL WHERE id = $1", [this.id]);
    }
  }

  /** Records that this worker started a job. */
  async claim(queue: string, jobId: string): Promise<void> {
    await db().query(
      `INSERT INTO job_claims (job_id, queue, worker_id, claimed_at) VALUES ($1, $2, $3, now())
       ON CONFLICT (job_id) DO UPDATE SET queue = EXCLUDED.queue, worker_id = EXCLUDED.worker_id, claimed_at = now()`,
      { bind: [jobId, queue, this.id] },
    );
  }

  /** Records that this worker is done with a job (whatever its outcome). */
  async release(jobId: string): Promise<void> {
    await db().query("DELETE FROM job_claims WHERE job_id = $1 AND worker_id = $2", { bind: [jobId, this.id] });
  }

  /**
   * Marks the workers of this jobs schema that are presumed dead, then hands
   * every active job claimed by a stopped or dead worker back to pg-boss.
   * Safe to run in several workers at once: a claim is deleted by exactly one
   * of them before its job is failed.
   */
  async reap(boss: PgBoss): Promise<HandedBackJob[]> {
    if (Date.now() < this.reapNotBefore) return [];
    const { settings, jobsSchema } = this.options;
    const silent = await db().query<{ id: number; label: string; age: number }>(
      `SELECT id, label, EXTRACT(EPOCH FROM now() - heartbeat_at)::float8 AS age FROM job_workers
        WHERE jobs_schema = $1 AND id <> $2 AND stopped_at IS NULL AND heartbeat_at < now() - make_interval(secs => $3)`,
      { bind: [jobsSchema, this.id, deadAfterSeconds(settings)], type: QueryTypes.SELECT },
    );
    for (const worker of silent) {
      const lockFree = await this.lockIsFree(worker.id);
      if (!presumedDead({ lockFree, heartbeatAgeSeconds: worker.age }, settings)) continue;
      const reason = `presumed dead by worker ${this.label}: ${lockFree ? "its database session is gone" : "its session is still open"} and its last heartbeat was ${worker.age.toFixed(1)} s ago`;
      await db().query("UPDATE job_workers SET stopped_at = now(), stop_reason = $2 WHERE id = $1 AND stopped_at IS NULL", { bind: [worker.id, reason] });
      this.options.log(`worker ${worker.label} ${reason}`);
    }
    const orphans = await db().query<{ job_id: string; queue: string; label: string }>(
      `DELETE FROM job_claims c USING job_workers w
        WHERE c.worker_id = w.id AND w.jobs_schema = $1 AND w.stopped_at IS NOT NULL
        RETURNING c.job_id, c.queue, w.label`,
      { bind: [jobsSchema], type: QueryTypes.SELECT },
    );
    const handedBack: HandedBackJob[] = [];
    for (const orphan of orphans) {
      const job = await this.handBack(boss, orphan.queue, orphan.job_id, orphan.label, {
        failure: `worker ${orphan.label} stopped while this job was active`,
        logged: ` of worker ${orphan.label}`,
      });
      if (job) handedBack.push(job);
    }
    handedBack.push(...(await this.sweepUnclaimed(boss)));
    return handedBack;
  }

  /**
   * Fails one job through pg-boss, which retries it per its queue, if it is
   * still active; finished jobs (or ones pg-boss already expired and retried)
   * need nothing and give null.
   */
  private async handBack(
    boss: PgBoss,
    queue: string,
    jobId: string,
    deadWorker: string,
    why: { failure: string; logged: string },
  ): Promise<HandedBackJob | null> {
    const job = await boss.getJobById(queue, jobId, { includeArchive: false });
    if (!job || job.state !== "active") return null;
    await boss.fail(queue, jobId, { message: `${why.failure} (handed back by ${this.label})` });
    const finalAttempt = job.retryCount >= job.retryLimit;
    this.options.log(`handed ${queue} ${jobId}${why.logged} back to the queue${finalAttempt ? " (its last attempt: failed)" : " for a retry"}`);
    return { queue, jobId, deadWorker, finalAttempt, data: job.data };
  }

  /**
   * Hands back active jobs of our queues that nobody has claimed for a whole
   * lease: taken from pg-boss by a worker that died before it could write its
   * claim. Reads pg-boss's own job table (pg-boss 10 has no call that lists
   * active jobs). One worker sweeps at a time, so a job is failed once.
   */
  private async sweepUnclaimed(boss: PgBoss): Promise<HandedBackJob[]> {
    const { settings, jobsSchema, queues } = this.options;
    if (queues.length === 0) return [];
    return db().transaction(async (transaction) => {
      const [lock] = await db().query<{ got: boolean }>("SELECT pg_try_advisory_xact_lock($1, $2) AS got", {
        bind: [LOCK_NAMESPACE, SWEEP_KEY],
        type: QueryTypes.SELECT,
        transaction,
      });
      if (!lock?.got) return [];
      const unclaimed = await db().query<{ id: string; name: string; age: number }>(
        `SELECT j.id::text AS id, j.name, EXTRACT(EPOCH FROM now() - j.started_on)::float8 AS age FROM "${jobsSchema}".job j
          WHERE j.state = 'active' AND j.name = ANY($1::text[]) AND j.started_on < now() - make_interval(secs => $2)
            AND NOT EXISTS (SELECT 1 FROM job_claims c WHERE c.job_id = j.id)`,
        { bind: [queues, settings.leaseSeconds], type: QueryTypes.SELECT, transaction },
      );
      const handedBack: HandedBackJob[] = [];
      for (const orphan of unclaimed) {
        const unclaimedFor = `active and unclaimed for ${orphan.age.toFixed(0)} s`;
        const job = await this.handBack(boss, orphan.name, orphan.id, "an unrecorded worker", {
          failure: `taken by an unrecorded worker: ${unclaimedFor}`,
          logged: `, ${unclaimedFor},`,
        });
        if (job) handedBack.push(job);
      }
      return handedBack;
    });
  }

  /** True when no session holds the worker's lock (a transaction-scoped try, released at once). */
  private async lockIsFree(workerId: number): Promise<boolean> {
    return db().transaction(async (transaction) => {
      const [row] = await db().query<{ free: boolean }>("SELECT pg_try_advisory_xact_lock($1, $2) AS free", {
        bind: [LOCK_NAMESPACE, workerId],
        type: QueryTypes.SELECT,
        transaction,
      });
      return row?.free === true;
    });
  }

  /**
   * Marks this worker stopped and lets its lock go. Claims still held (jobs
   * that did not finish within the graceful stop) are handed back by the next
   * reap of any other worker.
   */
  async stop(reason = "stopped"): Promise<void> {
    this.stopped = true;
    if (this.timer) clearInterval(this.timer);
    await db()
      .query("UPDATE job_workers SET stopped_at = now(), stop_reason = $2 WHERE id = $1", { bind: [this.id, reason] })
      .catch(() => undefined);
    const client = this.client;
    this.client = null;
    await client?.end().catch(() => undefined);
  }
}
