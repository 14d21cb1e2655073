import { z } from "zod";
import { digestSendPayloadSchema, invitationEmailPayloadSchema } from "./payloads";

/**
 * Every queue Tessera uses, with the zod schema its payload must satisfy.
 * To add a queue: add its schema here (a schema the domains also use goes in
 * payloads.ts) and its handler in worker/handlers.ts (the registry's type
 * makes a missing handler a compile error). Nothing in lib/jobs imports a
 * domain: the worker wires queues to domain code from above.
 */
export const queueSchemas = {
  /** Self-check: sends one mail through the worker. Used by tests and by `npm run worker -- --self-check`. */
  "mail-test": z.object({
    to: z.string().email(),
    subject: z.string().min(1).max(300),
    text: z.string().max(10_000).default("Tessera mail self-check."),
  }),
  /** Invitation to a workspace (lib/team/invitation-mail.ts renders and sends it). */
  "invitation-email": invitationEmailPayloadSchema,
  /** One indicator of an analysis run (lib/runs/worker.ts); several workers share a run's pieces. */
  "run-piece": z.object({ runId: z.number().int().positive(), indicator: z.string().min(1).max(120) }),
  /** Validate and store one uploaded boundary or panel version (lib/intake/jobs.ts). */
  "intake-validate": z.object({ kind: z.enum(["boundaries", "panel"]), versionId: z.number().int().positive() }),
  /** A run completed: enqueue one digest-send per after-run subscriber of its workspace (lib/digests/service.ts). */
  "digest-run-completed": z.object({ runId: z.number().int().positive() }),
  /** Calendar digests (pg-boss cron, see QUEUE_SCHEDULES; pg-boss 10 keys a schedule by queue name, hence one queue each). */
  "digest-weekly": z.object({}),
  "digest-monthly": z.object({}),
  /** One digest to one subscriber; the idempotency key makes repeats no-ops (lib/digests/service.ts). */
  "digest-send": digestSendPayloadSchema,
  /** Daily (QUEUE_SCHEDULES): deletes uploads started but never completed, and their stored files (lib/intake/abandoned-uploads-sweep.ts). */
  "uploads-sweep": z.object({}),
} as const;

export type QueueName = keyof typeof queueSchemas;
/** The payload a handler receives (after defaults are applied). */
export type JobPayload<Q extends QueueName> = z.output<(typeof queueSchemas)[Q]>;
/** What a caller passes to enqueue(). */
export type JobInput<Q extends QueueName> = z.input<(typeof queueSchemas)[Q]>;

/** `worker` is the label of the worker process running the job (WORKER_LABEL, else host:pid). */
export type JobContext = { id: string; queue: QueueName; worker: string; log: (message: string) => void };
/** What the worker calls with a job's parsed payload (the registry is worker/handlers.ts). */
export type JobHandler<Q extends QueueName> = (payload: JobPayload<Q>, context: JobContext) => Promise<void>;

export const QUEUE_NAMES = Object.keys(queueSchemas) as QueueName[];

/** Per-queue pg-boss settings (retries, expiry, retention). */
export type QueueSettings = { retryLimit?: number; retryDelay?: number; retryBackoff?: boolean; expireInSeconds?: number; retentionMinutes?: number };

export const DEFAULT_QUEUE_SETTINGS: QueueSettings = { retryLimit: 2, retryDelay: 5, retryBackoff: true, expireInSeconds: 15 * 60 };

export const queueSettings: Partial<Record<QueueName, QueueSettings>> = {
  "mail-test": { retryLimit: 1, retryDelay: 2, expireInSeconds: 60 },
  // lib/runs/worker.ts PIECE_ATTEMPTS assumes retryLimit 2 (three attempts).
  "run-piece": { retryLimit: 2, retryDelay: 2, retryBackoff: false, expireInSeconds: 30 * 60 },
  // A million-row panel takes well under a minute; retries only matter if a worker dies mid-ingest.
  "intake-validate": { retryLimit: 2, retryDelay: 5, expireInSeconds: 30 * 60 },
  // SMTP refusals are retried 10 times, the wait doubling from 10–20 s (pg-boss adds up to 100 % jitter): an SMTP outage of up to about 3 hours still delivers. Every attempt is recorded in digest_deliveries.
  "digest-send": { retryLimit: 10, retryDelay: 10, retryBackoff: true, expireInSeconds: 5 * 60 },
  "digest-run-completed": { retryLimit: 3, retryDelay: 5, retryBackoff: true, expireInSeconds: 5 * 60 },
  "digest-weekly": { retryLimit: 3, retryDelay: 30, retryBackoff: true, expireInSeconds: 15 * 60 },
  "digest-monthly": { retryLimit: 3, retryDelay: 30, retryBackoff: true, expireInSeconds: 15 * 60 },
  // A file-store failure does not fail the job (those uploads wait for the next day's sweep); a database error is retried.
  "uploads-sweep": { retryLimit: 2, retryDelay: 60, retryBackoff: true, expireInSeconds: 30 * 60 },
};

/** Cron schedules (UTC) registered by workers (lib/jobs/boss.ts). */
export const QUEUE_SCHEDULES: { queue: QueueName; cron: string; data: object }[] = [
  { queue: "digest-weekly", cron: "0 7 * * 1", data: {} },
  { queue: "digest-monthly", cron: "0 7 1 * *", data: {} },
  { queue: "uploads-sweep", cron: "30 3 * * *", data: {} },
];

export function isQueueName(name: string): name is QueueName {
  return Object.prototype.hasOwnProperty.call(queueSchemas, name);
}
