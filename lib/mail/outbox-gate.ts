import type { Env } from "@/lib/config/env";

const LOOPBACK = new Set(["127.0.0.1", "localhost", "::1", "[::1]"]);

/**
 * Whether the Outbox page exists: only while mail goes to the local sink, so
 * it can never show mail that also left the machine. All three must hold:
 * TESSERA_OUTBOX=1, SMTP_HOST is a loopback address, and SMTP_PORT is the
 * port the project's scripts started the sink on (SMTP_SINK_PORT). With a
 * real relay configured, or no sink started, the page answers 404.
 */
export function outboxEnabled(config: Pick<Env, "TESSERA_OUTBOX" | "SMTP_HOST" | "SMTP_PORT" | "SMTP_SINK_PORT">): boolean {
  return config.TESSERA_OUTBOX && LOOPBACK.has(config.SMTP_HOST.trim().toLowerCase()) && config.SMTP_SINK_PORT !== undefined && config.SMTP_PORT === config.SMTP_SINK_PORT;
}
