import type PgBoss from "pg-boss";
import { getBoss } from "@/lib/jobs/boss";
import { isQueueName, queueSchemas, type JobInput, type QueueName } from "@/lib/jobs/queues";

export type EnqueueOptions = Pick<PgBoss.SendOptions, "priority" | "startAfter" | "singletonKey" | "singletonSeconds" | "retryLimit" | "retryDelay" | "expireInSeconds">;

/**
 * Validates `payload` against the queue's zod schema and sends it to pg-boss.
 * Returns the job id, or null when a singleton rule suppressed the job.
 * Throws naming the queue and the first invalid field.
 */
export async function enqueue<Q extends QueueName>(queue: Q, payload: JobInput<Q>, options: EnqueueOptions = {}): Promise<string | null> {
  if (!isQueueName(queue)) throw new Error(`enqueue: unknown queue "${String(queue)}"`);
  const parsed = queueSchemas[queue].safeParse(payload);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new Error(`enqueue(${queue}): invalid payload field "${issue?.path.join(".") || "(root)"}": ${issue?.message}`);
  }
  const boss = await getBoss();
  return boss.send(queue, parsed.data as object, options);
}
