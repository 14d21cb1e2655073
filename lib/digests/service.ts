/**
 * Digests end to end: preparing one for a subscription (compose, render and
 * decide whether it goes out — the preview, "send now" and scheduled sends
 * all take this one path), delivering it exactly once per idempotency key
 * with the reason recorded when it is not sent, scheduling after runs and by
 * calendar, saving and unsubscribing.
 */
import { createHash } from "node:crypto";
import { QueryTypes } from "sequelize";
import { can, isRole } from "@/lib/auth/roles";
import { env } from "@/lib/config/env";
import { db } from "@/lib/db";
import { enqueue } from "@/lib/jobs/enqueue";
import type { DigestSendPayload } from "@/lib/jobs/payloads";
import { sendMail } from "@/lib/mail/send";
import { describeMethod, selectBaseline } from "@/lib/runs/comparability";
import { runName } from "@/lib/runs/label";
import type { DigestCadence } from "@/models/digest-types";
import { renderIndicatorChart, stableSvgIds } from "./chart";
import { composeDigest, summariseDigest, type DigestComparison, type DigestContent } from "./compose";
import {
  chartPoints,
  completedRun,
  deliveredRuns,
  digestRows,
  getSubscriptionById,
  indicatorLabels,
  latestCompletedRun,
  regionNames,
  activeSubscriptions,
  type RunRef,
  type SubscriptionView,
} from "./queries";
import { renderDigest, type RenderedDigest } from "./render";
import type { SubscriptionInput } from "./schemas";
import { signUnsubscribeToken } from "./token";

/** At most this many charts per digest (the rest are linked). */
const MAX_CHARTS = 6;

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
  /** The same on every attempt at one digest (digestMessageId). */
  messageId: string;
  headers: Record<string, string>;
  /** The subscription's workspace (the local sink files the mail under it). */
  workspaceId: number;
}
/** Sends one mail and returns its Message-ID (default: lib/mail/send over SMTP). */
export type MailSender = (mail: OutgoingMail) => Promise<string>;

export interface BuiltDigest {
  subscription: SubscriptionView;
  recipient: { email: string; name: string };
  workspace: { id: number; slug: string; name: string };
  current: RunRef | null;
  previousRunId: number | null;
  /** The previous digest's run as the screens name it (null for a first digest). */
  previousRunLabel: string | null;
  content: DigestContent;
  rendered: RenderedDigest;
  unsubscribeUrl: string;
}

async function recipientWithAccess(subscription: SubscriptionView) {
  const rows = await db().query<{ email: string; name: string; role: string; slug: string; wname: string }>(
    `SELECT u.email, u.name, m.role, w.slug, w.name AS wname FROM users u
       JOIN memberships m ON m.user_id = u.id AND m.workspace_id = $2
       JOIN workspaces w ON w.id = m.workspace_id
      WHERE u.id = $1`,
    { bind: [subscription.userId, subscription.workspaceId], type: QueryTypes.SELECT },
  );
  const row = rows[0];
  if (!row || !isRole(row.role) || !can(row.role, "digests.subscribe")) return null;
  return { recipient: { email: row.email, name: row.name }, workspace: { id: subscription.workspaceId, slug: row.slug, name: row.wname } };
}

export function unsubscribeUrl(subscriptionId: number): string {
  const base = env().NEXTAUTH_URL.replace(/\/+$/, "");
  return `${base}/api/digests/unsubscribe?token=${encodeURIComponent(signUnsubscribeToken(subscriptionId))}`;
}

/**
 * The digest `subscription` would receive now: the given completed run (or
 * the workspace's latest) against the newest run one of the subscriber's
 * SENT digests reported that was computed the same way
 * (lib/runs/comparability). None sent about this panel: a first digest,
 * which compares nothing. Only ones computed differently: a change of
 * method, which compares nothing either and says so.
 * Returns null when the holder is no longer a member of the workspace —
 * nothing from a workspace they cannot see is ever read.
 */
export async function buildDigest(subscription: SubscriptionView, options: { runId?: number | null; coverage?: string } = {}): Promise<BuiltDigest | null> {
  const access = await recipientWithAccess(subscription);
  if (!access) return null;
  const workspaceId = subscription.workspaceId;
  const current = options.runId ? await completedRun(workspaceId, options.runId) : await latestCompletedRun(workspaceId);
  const currentRows = current ? await digestRows(current.id) : [];
  let comparison: DigestComparison = { kind: "first" };
  let previousRunLabel: string | null = null;
  if (current) {
    const baseline = selectBaseline(current, await deliveredRuns(subscription.id, workspaceId));
    if (baseline.kind === "comparable") {
      // The same run as last time: nothing is new.
      const rows = baseline.run.id === current.id ? currentRows : await digestRows(baseline.run.id);
      comparison = { kind: "previous-digest", runId: baseline.run.id, rows };
      previousRunLabel = baseline.run.label;
    } else if (baseline.kind === "method-changed") {
      comparison = { kind: "method-changed", runId: baseline.run.id, sentence: baseline.sentence };
      previousRunLabel = baseline.run.label;
    }
  }
  const names = current ? await regionNames(current.boundaryVersionId) : new Map<string, string>();
  const content = composeDigest(comparison, currentRows, subscription, (code) => names.get(code) ?? code);
  const labels = await indicatorLabels(workspaceId);
  const charts = new Map<string, string>();
  content.indicators.slice(0, MAX_CHARTS).forEach((code, k) => {
    charts.set(code, stableSvgIds(renderIndicatorChart(`${labels.get(code) ?? code}: Moran's I by period`, chartPoints(currentRows, code)), `tc${k}`));
  });
  const link = unsubscribeUrl(subscription.id);
  const rendered = renderDigest({
    content,
    workspace: access.workspace,
    recipientName: access.recipient.name,
    coverage: options.coverage ?? (current ? `results of ${current.label}` : "no completed run yet"),
    runId: current?.id ?? null,
    runLabel: current?.label ?? null,
    baselineRunLabel: previousRunLabel,
    runMethod: current ? describeMethod(current) : null,
    indicatorLabels: labels,
    charts,
    baseUrl: env().NEXTAUTH_URL,
    unsubscribeUrl: link,
  });
  const previousRunId = content.baseline.kind === "first" ? null : content.baseline.runId;
  return { subscription, ...access, current, previousRunId, previousRunLabel, content, rendered, unsubscribeUrl: link };
}

/** Whether a prepared digest goes out, and if not, the sentence that says why (recorded and shown). */
export type DigestDecision = { readonly send: true; readonly to: string } | { readonly send: false; readonly reason: string };

export interface PreparedDigest {
  /** Null when the holder is not a member any more (nothing was read). */
  readonly built: BuiltDigest | null;
  readonly decision: DigestDecision;
}

/** Coverage of a digest sent on request (also what the preview renders, so both are the same text). */
export const ON_REQUEST_COVERAGE = "on request";

/** The rule, pure: whether `built` is sent to the holder of `subscription`. */
export function decideDigest(subscription: SubscriptionView | null, built: BuiltDigest | null): DigestDecision {
  if (!subscription || !subscription.active) return { send: false, reason: "The subscription was cancelled (unsubscribed) before sending." };
  if (!built) return { send: false, reason: "The subscriber is no longer a member of the workspace." };
  if (built.content.empty && subscription.emptyPolicy === "skip") {
    const why =
      built.current === null
        ? "There is no completed run in this workspace yet"
        : built.content.baseline.kind === "previous-digest"
          ? built.content.baseline.runId === built.current.id
            ? `Your previous digest already reported ${built.current.label}, so nothing is new`
            : `Nothing changed in the indicators you follow between ${built.previousRunLabel ?? `run ${built.content.baseline.runId}`} (your previous digest) and ${built.current.label}`
          : `Nothing in the indicators you follow is significant or moved between periods in ${built.current.label}`;
    return { send: false, reason: `${why}, and you chose to receive nothing when nothing changed.` };
  }
  return { send: true, to: built.recipient.email };
}

/** Composes, renders and decides, once: what the preview shows is what a send would do. */
export async function prepareDigest(subscription: SubscriptionView | null, options: { runId?: number | null; coverage?: string } = {}): Promise<PreparedDigest> {
  if (!subscription || !subscription.active) return { built: null, decision: decideDigest(subscription, null) };
  const built = await buildDigest(subscription, options);
  return { built, decision: decideDigest(subscription, built) };
}

export type DeliveryOutcome = "sent" | "skipped" | "duplicate";

const defaultSender: MailSender = (mail) => sendMail(mail);

type Transaction = import("sequelize").Transaction;

type Finish =
  | { status: "sent"; messageId: string; coveredRunId: number | null; summary: object }
  | { status: "skipped"; reason: string; coveredRunId: number | null; summary?: object }
  | { status: "failed"; error: string; summary: object };

async function finish(id: number, fields: Finish, transaction: Transaction) {
  await db().query(
    `UPDATE digest_deliveries SET status = CAST($2 AS varchar), message_id = COALESCE(CAST($3 AS varchar), message_id), error = CAST($4 AS text),
            skipped_reason = CAST($5 AS text), covered_run_id = COALESCE(CAST($6 AS integer), covered_run_id),
            summary = COALESCE(CAST($7 AS jsonb), summary), sent_at = CASE WHEN CAST($2 AS varchar) = 'sent' THEN now() ELSE sent_at END, updated_at = now()
      WHERE id = $1`,
    {
      bind: [
        id,
        fields.status,
        fields.status === "sent" ? fields.messageId : null,
        fields.status === "failed" ? fields.error : null,
        fields.status === "skipped" ? fields.reason : null,
        fields.status === "failed" ? null : fields.coveredRunId,
        fields.summary ? JSON.stringify(fields.summary) : null,
      ],
      transaction,
    },
  );
}

/** Only a digest actually sent moves "last digest": a skip reported nothing. */
async function advanceWatermark(subscriptionId: number, runId: number | null, transaction: Transaction) {
  await db().query("UPDATE digest_subscriptions SET last_digest_at = now(), last_run_id = COALESCE(CAST($2 AS integer), last_run_id), updated_at = now() WHERE id = $1", {
    bind: [subscriptionId, runId],
    transaction,
  });
}

/**
 * The Message-ID of one digest to one subscriber, the same on every attempt:
 * if a copy is ever sent twice (see deliverDigest), mail clients that group
 * by Message-ID show it once.
 */
export function digestMessageId(idempotencyKey: string): string {
  const domain = /@([^>\s]+)>?\s*$/.exec(env().MAIL_FROM)?.[1] ?? "tessera.invalid";
  return `<digest.${createHash("sha256").update(idempotencyKey).digest("hex").slice(0, 32)}@${domain}>`;
}

/** Longest a repeated job waits for another attempt at the same digest to finish (SMTP timeouts are 10 s + 30 s). */
const LOCK_WAIT = "2min";

/** What became of one delivery, with the sentence a person is shown. */
export type DeliveryReport =
  | { outcome: "sent"; to: string; subject: string; messageId: string }
  | { outcome: "skipped"; reason: string }
  | { outcome: "duplicate"; status: string };

type Attempt = DeliveryReport | { outcome: "failed"; reason: string };

/**
 * The digest-send job: at most one mail per idempotency key (one digest to
 * one subscriber), however often the job runs. Returns the outcome only;
 * {@link deliverDigestReport} also says to whom, what, or why not.
 */
export async function deliverDigest(payload: DigestSendPayload, options: { send?: MailSender; log?: (m: string) => void } = {}): Promise<DeliveryOutcome> {
  return (await deliverDigestReport(payload, options)).outcome;
}

/**
 * One delivery attempt (the job's, and "send now"'s in the request).
 *
 * The delivery row (unique key) is created first, then locked FOR UPDATE for
 * the whole attempt: a repeated job waits for the lock and then finds the row
 * sent or skipped (a no-op, "duplicate"). The digest is prepared exactly as
 * the preview prepares it (prepareDigest); a digest that is not sent is
 * recorded as skipped with its reason. The SMTP send happens while the lock is
 * held and the row is marked sent in the same transaction, committed as soon
 * as the server has accepted the message. A refused or unreachable server is
 * recorded (status failed, attempts, error), committed, and rethrown so pg-boss
 * retries with backoff. A worker that dies mid-attempt leaves nothing behind
 * (its transaction rolls back and the lock goes with its connection), so the
 * retry after the job expires sends.
 *
 * The one window left: the server accepted the mail but the commit that
 * records it did not happen (the database went away, or the worker died in
 * between). The retry then sends a second copy, with the same Message-ID.
 */
export async function deliverDigestReport(payload: DigestSendPayload, options: { send?: MailSender; log?: (m: string) => void } = {}): Promise<DeliveryReport> {
  const log = options.log ?? (() => undefined);
  const send = options.send ?? defaultSender;
  await db().query(
    `INSERT INTO digest_deliveries (subscription_id, idempotency_key, run_id, status, attempts, created_at, updated_at)
     SELECT $1, CAST($2 AS varchar), CAST($3 AS integer), 'queued', 0, now(), now() WHERE EXISTS (SELECT 1 FROM digest_subscriptions WHERE id = $1)
     ON CONFLICT (idempotency_key) DO NOTHING`,
    { bind: [payload.subscriptionId, payload.idempotencyKey, payload.runId] },
  );
  const attempt = await db().transaction(async (transaction): Promise<Attempt> => {
    await db().query(`SET LOCAL lock_timeout = '${LOCK_WAIT}'`, { transaction });
    const rows = await db().query<{ id: string; status: string; attempts: number }>(
      "SELECT id, status, attempts FROM digest_deliveries WHERE idempotency_key = $1 AND subscription_id = $2 FOR UPDATE",
      { bind: [payload.idempotencyKey, payload.subscriptionId], type: QueryTypes.SELECT, transaction },
    );
    const row = rows[0];
    if (!row) {
      const reason = `The subscription ${payload.subscriptionId} no longer exists.`;
      log(`digest ${payload.idempotencyKey}: ${reason} Nothing sent`);
      return { outcome: "skipped", reason };
    }
    if (row.status === "sent" || row.status === "skipped") {
      log(`digest ${payload.idempotencyKey}: already ${row.status}; nothing sent`);
      return { outcome: "duplicate", status: row.status };
    }
    const deliveryId = Number(row.id);
    const attempts = row.attempts + 1;
    await db().query("UPDATE digest_deliveries SET status = 'sending', attempts = $2, updated_at = now() WHERE id = $1", { bind: [deliveryId, attempts], transaction });
    const subscription = await getSubscriptionById(payload.subscriptionId);
    const { built, decision } = await prepareDigest(subscription, { runId: payload.runId, coverage: payload.coverage });
    const summary = built
      ? { ...summariseDigest(built.content), runId: built.current?.id ?? null, previousRunId: built.previousRunId, subject: built.rendered.subject }
      : undefined;
    if (!decision.send || !built) {
      const reason = decision.send ? "The subscriber is no longer a member of the workspace." : decision.reason;
      await finish(deliveryId, { status: "skipped", reason, coveredRunId: built?.current?.id ?? null, summary }, transaction);
      log(`digest ${payload.idempotencyKey}: skipped: ${reason}`);
      return { outcome: "skipped", reason };
    }
    let messageId: string;
    try {
      messageId = await send({
        to: built.recipient.email,
        subject: built.rendered.subject,
        text: built.rendered.text,
        html: built.rendered.html,
        messageId: digestMessageId(payload.idempotencyKey),
        workspaceId: built.workspace.id,
        headers: {
          "List-Unsubscribe": `<${built.unsubscribeUrl}>`,
          "List-Unsubscribe-Post": "List-Unsubscribe=One-Click",
          "X-Tessera-Digest": payload.idempotencyKey,
        },
      });
    } catch (error) {
      const reason = error instanceof Error ? error.message : String(error);
      await finish(deliveryId, { status: "failed", error: `Attempt ${attempts} failed: ${reason}`, summary: summary ?? {} }, transaction);
      return { outcome: "failed", reason };
    }
    await finish(deliveryId, { status: "sent", messageId, coveredRunId: built.current?.id ?? null, summary: summary ?? {} }, transaction);
    await advanceWatermark(built.subscription.id, built.current?.id ?? null, transaction);
    log(`digest ${payload.idempotencyKey}: sent ${messageId} to ${built.recipient.email}`);
    return { outcome: "sent", to: built.recipient.email, subject: built.rendered.subject, messageId };
  });
  if (attempt.outcome === "failed") throw new Error(`digest ${payload.idempotencyKey} for subscription ${payload.subscriptionId}: ${attempt.reason}`);
  return attempt;
}

/** ISO 8601 week key, e.g. "2026-W49". */
export function isoWeekKey(date: Date): string {
  const d = new Date(Date.UTC(date.getUTCFullYear(), date.getUTCMonth(), date.getUTCDate()));
  const day = d.getUTCDay() || 7;
  d.setUTCDate(d.getUTCDate() + 4 - day);
  const yearStart = Date.UTC(d.getUTCFullYear(), 0, 1);
  const week = Math.ceil(((d.getTime() - yearStart) / 86_400_000 + 1) / 7);
  return `${d.getUTCFullYear()}-W${String(week).padStart(2, "0")}`;
}

export function monthKey(date: Date): string {
  return `${date.getUTCFullYear()}-${String(date.getUTCMonth() + 1).padStart(2, "0")}`;
}

/** The digest-send payloads owed after a completed run: one per after-run subscriber of its workspace. */
export async function digestJobsForRun(runId: number): Promise<DigestSendPayload[]> {
  const rows = await db().query<{ workspace_id: number }>("SELECT workspace_id FROM runs WHERE id = $1 AND state = 'completed'", { bind: [runId], type: QueryTypes.SELECT });
  if (!rows[0]) return [];
  const subscriptions = await activeSubscriptions(Number(rows[0].workspace_id), "after_run");
  const [run] = await db().query<{ number: number }>("SELECT number FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  // Named by the workspace's run number, as on every screen; the full label is in the digest itself.
  return subscriptions.map((s) => ({ subscriptionId: s.id, idempotencyKey: `sub-${s.id}:run-${runId}`, runId, coverage: `results of ${runName(run?.number ?? runId)}` }));
}

/**
 * The digest-send payloads owed for the week or month containing `now`: one per
 * subscriber with that cadence (all workspaces, or only `workspaceId`). The key
 * names the period, so scheduling the same period twice owes nothing new.
 */
export async function digestJobsForCadence(cadence: Exclude<DigestCadence, "after_run">, now = new Date(), workspaceId: number | null = null): Promise<DigestSendPayload[]> {
  const period = cadence === "weekly" ? isoWeekKey(now) : monthKey(now);
  const subscriptions = await activeSubscriptions(workspaceId, cadence);
  return subscriptions.map((s) => ({ subscriptionId: s.id, idempotencyKey: `sub-${s.id}:${cadence}-${period}`, runId: null, coverage: `${cadence === "weekly" ? "week" : "month"} ${period}` }));
}

async function enqueueAll(payloads: DigestSendPayload[]): Promise<number> {
  for (const payload of payloads) await enqueue("digest-send", payload);
  return payloads.length;
}

/** After a run completes: one digest-send job per after-run subscriber of its workspace. Returns how many were enqueued. */
export async function scheduleDigestsForRun(runId: number): Promise<number> {
  return enqueueAll(await digestJobsForRun(runId));
}

/** Weekly or monthly: one digest-send job per subscriber with that cadence (all workspaces). */
export async function scheduleDigestsForCadence(cadence: Exclude<DigestCadence, "after_run">, now = new Date()): Promise<number> {
  return enqueueAll(await digestJobsForCadence(cadence, now));
}

/** Creates or updates the member's own subscription (re-subscribing clears unsubscribed_at). */
export async function saveSubscription(workspaceId: number, userId: number, input: SubscriptionInput): Promise<number> {
  const codes = input.scope === "chosen" ? [...new Set(input.indicatorCodes)].sort() : [];
  const rows = await db().query<{ id: number }>(
    `INSERT INTO digest_subscriptions (user_id, workspace_id, cadence, scope, indicator_codes, threshold, empty_policy, active, unsubscribed_at, created_at, updated_at)
     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, CASE WHEN $8 THEN NULL ELSE now() END, now(), now())
     ON CONFLICT (user_id, workspace_id) DO UPDATE SET cadence = EXCLUDED.cadence, scope = EXCLUDED.scope, indicator_codes = EXCLUDED.indicator_codes,
        threshold = EXCLUDED.threshold, empty_policy = EXCLUDED.empty_policy, active = EXCLUDED.active,
        unsubscribed_at = CASE WHEN EXCLUDED.active THEN NULL ELSE COALESCE(digest_subscriptions.unsubscribed_at, now()) END, updated_at = now()
     RETURNING id`,
    { bind: [userId, workspaceId, input.cadence, input.scope, codes, input.threshold, input.emptyPolicy, input.active], type: QueryTypes.SELECT },
  );
  return Number(rows[0].id);
}

/** Turns a subscription off (the unsubscribe link). Returns false when there is no such subscription. */
export async function unsubscribe(subscriptionId: number): Promise<{ found: boolean; workspaceName: string | null }> {
  const rows = await db().query<{ name: string }>(
    `UPDATE digest_subscriptions s SET active = false, unsubscribed_at = COALESCE(s.unsubscribed_at, now()), updated_at = now()
       FROM workspaces w WHERE s.id = $1 AND w.id = s.workspace_id RETURNING w.name`,
    { bind: [subscriptionId], type: QueryTypes.SELECT },
  );
  return { found: rows.length > 0, workspaceName: rows[0]?.name ?? null };
}
