// Tessera job worker: `npm run worker`. Starts pg-boss on DATABASE_URL, works
// every queue of lib/jobs/queues.ts with its handler from worker/handlers.ts,
// logs one line per job, and stops gracefully on SIGINT/SIGTERM (active jobs
// finish first). Run as many workers as you like against the same database.
//
// Each worker holds a lease (lib/jobs/lease.ts): when a worker dies with jobs
// active (killed, crashed, its machine gone), the others — or the next worker
// to start — hand those jobs back to the queue within a few heartbeats.
//
//   npm run worker                     work all queues until stopped
//   npm run worker -- --self-check a@b  also enqueue one mail-test job to a@b
//
// Settings (environment): WORKER_CONCURRENCY (2 jobs at a time per queue),
// WORKER_POLL_SECONDS (1), WORKER_LABEL (host:pid; recorded on run pieces),
// WORKER_HEARTBEAT_SECONDS (2), WORKER_LEASE_SECONDS (120), JOBS_SCHEMA (pgboss).
import os from "node:os";
import type PgBoss from "pg-boss";
import { z } from "zod";
import { getBoss, jobsSchema, stopBoss } from "@/lib/jobs/boss";
import { enqueue } from "@/lib/jobs/enqueue";
import { WorkerLease, type HandedBackJob } from "@/lib/jobs/lease";
import { deadAfterSeconds, leaseSettingsFrom, workerLabelFrom } from "@/lib/jobs/liveness";
import { isQueueName, QUEUE_NAMES, queueSchemas, type JobHandler, type QueueName } from "@/lib/jobs/queues";
import { closeMailer } from "@/lib/mail/send";
import { abandonedHandlers, handlers } from "./handlers";

const label = workerLabelFrom(process.env, os.hostname(), process.pid);
const log = (message: string) => console.log(`[${new Date().toISOString()}] [worker ${label}] ${message}`);

const settings = z
  .object({
    WORKER_CONCURRENCY: z.coerce.number().int().min(1).max(32).default(2),
    WORKER_POLL_SECONDS: z.coerce.number().min(0.5).max(60).default(1),
  })
  .parse(process.env);
const leaseSettings = leaseSettingsFrom(process.env);

async function runJob<Q extends QueueName>(queue: Q, job: PgBoss.Job<unknown>, lease: WorkerLease): Promise<void> {
  const started = Date.now();
  const parsed = queueSchemas[queue].safeParse(job.data);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const message = `invalid payload field "${issue?.path.join(".") || "(root)"}": ${issue?.message}`;
    log(`${queue} ${job.id} failed: ${message}`);
    throw new Error(message);
  }
  const handler = handlers[queue] as JobHandler<Q>;
  await lease.claim(queue, job.id);
  try {
    await handler(parsed.data as Parameters<JobHandler<Q>>[0], { id: job.id, queue, worker: label, log: (m) => log(`${queue} ${job.id}: ${m}`) });
    log(`${queue} ${job.id} done in ${Date.now() - started} ms`);
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    log(`${queue} ${job.id} failed after ${Date.now() - started} ms: ${reason}`);
    throw err;
  } finally {
    await lease.release(job.id).catch((e: unknown) => log(`could not release the claim on ${queue} ${job.id}: ${e instanceof Error ? e.message : String(e)}`));
  }
}

/** A job whose last attempt died with its worker: let its queue record the failure (no handler ran to do so). */
async function recordAbandoned(job: HandedBackJob): Promise<void> {
  if (!job.finalAttempt || !isQueueName(job.queue)) return;
  const queue: QueueName = job.queue;
  const onAbandoned = abandonedHandlers[queue] as ((payload: unknown, message: string) => Promise<void>) | undefined;
  const parsed = queueSchemas[queue].safeParse(job.data);
  if (!onAbandoned || !parsed.success) return;
  await onAbandoned(parsed.data, `the worker running it (${job.deadWorker}) stopped before it finished, on every attempt`);
}

async function reap(boss: PgBoss, lease: WorkerLease): Promise<void> {
  for (const job of await lease.reap(boss)) {
    await recordAbandoned(job).catch((e: unknown) => log(`could not record abandoned ${job.queue} ${job.jobId}: ${e instanceof Error ? e.message : String(e)}`));
  }
}

async function main(): Promise<void> {
  const boss = await getBoss("worker");
  const lease = await WorkerLease.register({ label, jobsSchema: jobsSchema(), queues: QUEUE_NAMES, settings: leaseSettings, log });
  // On start, before taking new work: hand back what dead workers left active.
  await reap(boss, lease);
  for (const queue of QUEUE_NAMES) {
    // Several work() subscriptions per queue give concurrency within one process.
    for (let i = 0; i < settings.WORKER_CONCURRENCY; i++) {
      await boss.work(queue, { batchSize: 1, pollingIntervalSeconds: settings.WORKER_POLL_SECONDS }, async (jobs) => {
        for (const job of jobs) await runJob(queue, job, lease);
      });
    }
  }
  lease.startHeartbeat(() => reap(boss, lease));
  log(
    `ready: ${QUEUE_NAMES.length} queue(s) [${QUEUE_NAMES.join(", ")}], ${settings.WORKER_CONCURRENCY} at a time each; jobs schema ${jobsSchema()}; ` +
      `lease ${lease.id}, heartbeat every ${leaseSettings.heartbeatSeconds} s, a silent worker's jobs handed back after ${deadAfterSeconds(leaseSettings)} s`,
  );

  const selfCheck = process.argv.indexOf("--self-check");
  if (selfCheck >= 0) {
    const to = process.argv[selfCheck + 1] ?? "self-check@tessera.invalid";
    const id = await enqueue("mail-test", { to, subject: `Tessera worker self-check ${new Date().toISOString()}` });
    log(`self-check: enqueued mail-test ${id} to ${to}`);
  }

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    log(`${signal}: finishing active jobs, then stopping`);
    const force = setTimeout(() => {
      log("jobs still active after 25 s; exiting anyway");
      process.exit(1);
    }, 25_000);
    try {
      await stopBoss(20_000);
      await lease.stop(`stopped on ${signal}`);
      closeMailer();
    } finally {
      clearTimeout(force);
      log("stopped");
      process.exit(0);
    }
  };
  process.on("SIGINT", () => void stop("SIGINT"));
  process.on("SIGTERM", () => void stop("SIGTERM"));
}

main().catch((err: unknown) => {
  console.error(`[worker ${label}] could not start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
