/**
 * When is a worker presumed dead? Pure rules and their settings; the I/O
 * (heartbeats, advisory locks, handing jobs back) is in lease.ts.
 *
 * A live worker holds a session advisory lock on a connection of its own and
 * refreshes its heartbeat every `heartbeatSeconds`. PostgreSQL drops the lock
 * the moment that connection closes — a killed process closes it at once — so
 * a free lock plus a few missed heartbeats means the worker is gone. The extra
 * heartbeats of grace keep a brief connection loss (a database restart) from
 * handing away the jobs of a worker that is about to reconnect. A heartbeat
 * older than `leaseSeconds` counts as dead even while the lock is held: a hung
 * process, or a machine whose connection the server has not yet noticed is
 * gone (TCP keepalive can take hours).
 */
import { z } from "zod";

/** Missed heartbeats, with the lock free, before a worker is presumed dead. */
export const MISSED_HEARTBEATS = 3;

export const leaseSettingsSchema = z
  .object({
    WORKER_HEARTBEAT_SECONDS: z.coerce.number().min(0.2).max(60).default(2),
    WORKER_LEASE_SECONDS: z.coerce.number().min(5).max(86_400).default(120),
  })
  .refine((s) => s.WORKER_LEASE_SECONDS > s.WORKER_HEARTBEAT_SECONDS * MISSED_HEARTBEATS, {
    message: `must be more than ${MISSED_HEARTBEATS} heartbeats (WORKER_HEARTBEAT_SECONDS × ${MISSED_HEARTBEATS})`,
    path: ["WORKER_LEASE_SECONDS"],
  })
  .transform((s) => ({ heartbeatSeconds: s.WORKER_HEARTBEAT_SECONDS, leaseSeconds: s.WORKER_LEASE_SECONDS }));

export type LeaseSettings = z.output<typeof leaseSettingsSchema>;

/** Parses the lease settings from an environment; throws naming the variable at fault. */
export function leaseSettingsFrom(environment: Record<string, string | undefined>): LeaseSettings {
  const parsed = leaseSettingsSchema.safeParse(environment);
  if (parsed.success) return parsed.data;
  const issue = parsed.error.issues[0];
  throw new Error(`Worker setting ${issue?.path.join(".") || "(unknown)"}: ${issue?.message}`);
}

/** Seconds of heartbeat silence after which a worker whose lock is free is presumed dead. */
export function deadAfterSeconds(settings: LeaseSettings): number {
  return settings.heartbeatSeconds * MISSED_HEARTBEATS;
}

/**
 * Whether a worker is presumed dead.
 * @example presumedDead({ lockFree: true, heartbeatAgeSeconds: 7 }, { heartbeatSeconds: 2, leaseSeconds: 120 }); // true
 */
export function presumedDead(worker: { lockFree: boolean; heartbeatAgeSeconds: number }, settings: LeaseSettings): boolean {
  if (worker.heartbeatAgeSeconds > settings.leaseSeconds) return true;
  return worker.lockFree && worker.heartbeatAgeSeconds > deadAfterSeconds(settings);
}

/** The label a worker is known by: WORKER_LABEL, else host:pid. */
export const workerLabelSchema = z
  .string()
  .trim()
  .min(1)
  .max(200)
  .regex(/^[\w.:@\-]+$/, "letters, digits and . : @ - _ only");

export function workerLabelFrom(environment: Record<string, string | undefined>, host: string, pid: number): string {
  const given = environment.WORKER_LABEL;
  if (given === undefined || given === "") return `${host}:${pid}`;
  const parsed = workerLabelSchema.safeParse(given);
  if (!parsed.success) throw new Error(`Worker setting WORKER_LABEL: ${parsed.error.issues[0]?.message}`);
  return parsed.data;
}
