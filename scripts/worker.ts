// Tessera job worker: `npm run worker`. Starts pg-boss on DATABASE_URL, works
// every queue of lib/jobs/queues.ts with its handler from lib/jobs/handlers.ts,
// logs one line per job, and stops gracefully on SIGINT/SIGTERM (active jobs
// finish first). Run as many workers as you like against the same database.
//
//   npm run worker                     work all queues until stopped
//   npm run worker -- --self-check a@b  also enqueue one mail-test job to a@b
import type PgBoss from "pg-boss";
import { z } from "zod";
import { getBoss, stopBoss } from "@/lib/jobs/boss";
import { enqueue } from "@/lib/jobs/enqueue";
import { handlers, type JobHandler } from "@/lib/jobs/handlers";
import { QUEUE_NAMES, queueSchemas, type QueueName } from "@/lib/jobs/queues";
import { closeMailer } from "@/lib/mail/send";

const tag = `worker ${process.pid}`;
const log = (message: string) => console.log(`[${new Date().toISOString()}] [${tag}] ${message}`);

const settings = z
  .object({
    WORKER_CONCURRENCY: z.coerce.number().int().min(1).max(32).default(2),
    WORKER_POLL_SECONDS: z.coerce.number().min(0.5).max(60).default(1),
  })
  .parse(process.env);

async function runJob<Q extends QueueName>(queue: Q, job: PgBoss.Job<unknown>): Promise<void> {
  const started = Date.now();
  const parsed = queueSchemas[queue].safeParse(job.data);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const message = `invalid payload field "${issue?.path.join(".") || "(root)"}": ${issue?.message}`;
    log(`${queue} ${job.id} failed: ${message}`);
    throw new Error(message);
  }
  const handler = handlers[queue] as JobHandler<Q>;
  try {
    await handler(parsed.data as Parameters<JobHandler<Q>>[0], { id: job.id, queue, log: (m) => log(`${queue} ${job.id}: ${m}`) });
    log(`${queue} ${job.id} done in ${Date.now() - started} ms`);
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    log(`${queue} ${job.id} failed after ${Date.now() - started} ms: ${reason}`);
    throw err;
  }
}

async function main(): Promise<void> {
  const boss = await getBoss("worker");
  for (const queue of QUEUE_NAMES) {
    // Several work() subscriptions per queue give concurrency within one process.
    for (let i = 0; i < settings.WORKER_CONCURRENCY; i++) {
      await boss.work(queue, { batchSize: 1, pollingIntervalSeconds: settings.WORKER_POLL_SECONDS }, async (jobs) => {
        for (const job of jobs) await runJob(queue, job);
      });
    }
  }
  log(`ready: ${QUEUE_NAMES.length} queue(s) [${QUEUE_NAMES.join(", ")}], ${settings.WORKER_CONCURRENCY} at a time each`);

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
  console.error(`[${tag}] could not start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
