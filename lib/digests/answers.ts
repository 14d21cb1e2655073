/**
 * The shapes the digest routes answer and the Digests screen reads (types
 * only, so the screen can import them without server code).
 */
import type { DigestBaseline } from "./compose";

/** What the preview says would happen now, as one sentence the screen shows. */
export type DigestDecisionAnswer = { send: true; to: string; sentence: string } | { send: false; reason: string; sentence: string };

export type DigestPreviewAnswer = {
  /** Null when nothing was composed (an unsubscribed member). */
  subject: string | null;
  html: string | null;
  text: string | null;
  empty: boolean;
  runId: number | null;
  previousRunId: number | null;
  baseline: DigestBaseline | null;
  decision: DigestDecisionAnswer;
};

/** POST …/digests/send-now: `status` and the sentence the screen shows as it is. */
export type SendNowAnswer = { status: "queued" | "sent" | "skipped" | "retrying" | "duplicate"; sentence: string; idempotencyKey: string };
