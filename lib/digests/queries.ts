import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { indicatorVisibleSql, type IndicatorVisibility } from "@/lib/intake/published-panel";
import { runLabel } from "@/lib/runs/label";
import type { SignificanceClass } from "@/lib/runs/types";
import type { DigestCadence, DigestDeliveryStatus, DigestEmptyPolicy, DigestScope, DigestThreshold } from "@/models/digest-types";
import { LOCAL_CLUSTER_CLASSES, type DigestResultRow } from "./compose";
import type { ChartPoint } from "./chart";

export interface SubscriptionView {
  id: number;
  userId: number;
  workspaceId: number;
  cadence: DigestCadence;
  scope: DigestScope;
  indicatorCodes: string[];
  threshold: DigestThreshold;
  emptyPolicy: DigestEmptyPolicy;
  active: boolean;
  unsubscribedAt: string | null;
  lastDigestAt: string | null;
  lastRunId: number | null;
}

type SubscriptionRow = {
  id: number;
  user_id: number;
  workspace_id: number;
  cadence: DigestCadence;
  scope: DigestScope;
  indicator_codes: string[];
  threshold: DigestThreshold;
  empty_policy: DigestEmptyPolicy;
  active: boolean;
  unsubscribed_at: Date | null;
  last_digest_at: Date | null;
  last_run_id: number | null;
};

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

function toView(r: SubscriptionRow): SubscriptionView {
  return {
    id: Number(r.id),
    userId: Number(r.user_id),
    workspaceId: Number(r.workspace_id),
    cadence: r.cadence,
    scope: r.scope,
    indicatorCodes: r.indicator_codes ?? [],
    threshold: r.threshold,
    emptyPolicy: r.empty_policy,
    active: r.active,
    unsubscribedAt: iso(r.unsubscribed_at),
    lastDigestAt: iso(r.last_digest_at),
    lastRunId: r.last_run_id === null ? null : Number(r.last_run_id),
  };
}

export async function getSubscriptionById(id: number): Promise<SubscriptionView | null> {
  const rows = await db().query<SubscriptionRow>("SELECT * FROM digest_subscriptions WHERE id = $1", { bind: [id], type: QueryTypes.SELECT });
  return rows[0] ? toView(rows[0]) : null;
}

export async function getOwnSubscription(workspaceId: number, userId: number): Promise<SubscriptionView | null> {
  const rows = await db().query<SubscriptionRow>("SELECT * FROM digest_subscriptions WHERE workspace_id = $1 AND user_id = $2", {
    bind: [workspaceId, userId],
    type: QueryTypes.SELECT,
  });
  return rows[0] ? toView(rows[0]) : null;
}

/** Active subscriptions of a workspace with a cadence, whose holder is still a member. */
export async function activeSubscriptions(workspaceId: number | null, cadence: DigestCadence): Promise<SubscriptionView[]> {
  const rows = await db().query<SubscriptionRow>(
    `SELECT s.* FROM digest_subscriptions s
      WHERE s.active AND s.cadence = $2 AND (CAST($1 AS integer) IS NULL OR s.workspace_id = $1)
        AND EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = s.user_id AND m.workspace_id = s.workspace_id)
      ORDER BY s.id`,
    { bind: [workspaceId, cadence], type: QueryTypes.SELECT },
  );
  return rows.map(toView);
}

export interface SubscriberListing {
  name: string;
  email: string;
  role: string;
  cadence: DigestCadence;
  scope: DigestScope;
  indicatorCodes: string[];
  threshold: DigestThreshold;
  active: boolean;
  lastDigestAt: string | null;
}

/** Who subscribes to what in a workspace (managers' view); current members only. */
export async function workspaceSubscribers(workspaceId: number): Promise<SubscriberListing[]> {
  const rows = await db().query<SubscriptionRow & { name: string; email: string; role: string }>(
    `SELECT s.*, u.name, u.email, m.role FROM digest_subscriptions s
       JOIN users u ON u.id = s.user_id
       JOIN memberships m ON m.user_id = s.user_id AND m.workspace_id = s.workspace_id
      WHERE s.workspace_id = $1 ORDER BY s.active DESC, u.name`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return rows.map((r) => {
    const v = toView(r);
    return { name: r.name, email: r.email, role: r.role, cadence: v.cadence, scope: v.scope, indicatorCodes: v.indicatorCodes, threshold: v.threshold, active: v.active, lastDigestAt: v.lastDigestAt };
  });
}

export interface DeliveryView {
  id: number;
  idempotencyKey: string;
  runId: number | null;
  status: DigestDeliveryStatus;
  messageId: string | null;
  attempts: number;
  error: string | null;
  /** Why it was not sent (status skipped). */
  skippedReason: string | null;
  /** The run whose results it reported. */
  coveredRunId: number | null;
  /** That run (else the run that occasioned it) as the screens name it (lib/runs/label). */
  runLabel: string | null;
  sentAt: string | null;
  createdAt: string;
  summary: Record<string, unknown> | null;
}

export async function deliveryHistory(subscriptionId: number, limit = 50): Promise<DeliveryView[]> {
  const rows = await db().query<{
    id: string;
    idempotency_key: string;
    run_id: number | null;
    status: DigestDeliveryStatus;
    message_id: string | null;
    attempts: number;
    error: string | null;
    skipped_reason: string | null;
    covered_run_id: number | null;
    sent_at: Date | null;
    created_at: Date;
    summary: Record<string, unknown> | null;
    run_number: number | null;
    run_params: Record<string, unknown> | null;
    panel_name: string | null;
    panel_version: number | null;
  }>(
    `SELECT d.*, r.number AS run_number, r.params AS run_params, p.name AS panel_name, pv.version AS panel_version
       FROM digest_deliveries d
       LEFT JOIN runs r ON r.id = COALESCE(d.covered_run_id, d.run_id)
       LEFT JOIN panel_versions pv ON pv.id = r.panel_version_id
       LEFT JOIN panels p ON p.id = pv.panel_id
      WHERE d.subscription_id = $1 ORDER BY d.created_at DESC, d.id DESC LIMIT $2`,
    { bind: [subscriptionId, limit], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    id: Number(r.id),
    idempotencyKey: r.idempotency_key,
    runId: r.run_id === null ? null : Number(r.run_id),
    status: r.status,
    messageId: r.message_id,
    attempts: Number(r.attempts),
    error: r.error,
    skippedReason: r.skipped_reason,
    coveredRunId: r.covered_run_id === null ? null : Number(r.covered_run_id),
    runLabel:
      r.run_number === null || r.run_params === null || r.panel_name === null
        ? null
        : runLabel({ number: Number(r.run_number), panelName: r.panel_name, panelVersion: Number(r.panel_version), params: labelParams(r.run_params) }),
    sentAt: iso(r.sent_at),
    createdAt: new Date(r.created_at).toISOString(),
    summary: r.summary,
  }));
}

export interface RunRef {
  id: number;
  /** Per-workspace number, and the run's label as every screen shows it (lib/runs/label). */
  number: number;
  label: string;
  workspaceId: number;
  panelVersionId: number;
  boundaryVersionId: number;
  /** The panel lineage (lib/runs/comparability). */
  panelId: number;
  params: Record<string, unknown>;
}

type RunRow = {
  id: number;
  number: number;
  workspace_id: number;
  panel_version_id: number;
  boundary_version_id: number;
  panel_id: number;
  panel_name: string;
  panel_version: number;
  params: Record<string, unknown>;
};
/** The label's parameters out of stored run params (JSON). */
function labelParams(params: Record<string, unknown>) {
  const controlFor = Array.isArray(params.controlFor) ? params.controlFor.map(String) : undefined;
  const eb = Array.isArray(params.empiricalBayes) ? params.empiricalBayes.map((d: unknown) => ({ indicator: String((d as { indicator?: unknown })?.indicator ?? "") })) : undefined;
  return {
    weights: String(params.weights ?? ""),
    transform: String(params.transform ?? ""),
    permutations: Number(params.permutations ?? 0),
    ...(controlFor ? { controlFor } : {}),
    ...(eb ? { empiricalBayes: eb } : {}),
  };
}

const toRun = (r: RunRow): RunRef => ({
  id: Number(r.id),
  number: Number(r.number),
  label: runLabel({
    number: Number(r.number),
    panelName: r.panel_name,
    panelVersion: Number(r.panel_version),
    params: labelParams(r.params),
  }),
  workspaceId: Number(r.workspace_id),
  panelVersionId: Number(r.panel_version_id),
  boundaryVersionId: Number(r.boundary_version_id),
  panelId: Number(r.panel_id),
  params: r.params,
});
const RUN_REF_SELECT = `SELECT r.id, r.number, r.workspace_id, r.panel_version_id, r.boundary_version_id, pv.panel_id, p.name AS panel_name, pv.version AS panel_version, r.params
  FROM runs r JOIN panel_versions pv ON pv.id = r.panel_version_id JOIN panels p ON p.id = pv.panel_id`;

/** A completed run of the workspace (never one from another workspace), or null. */
export async function completedRun(workspaceId: number, runId: number): Promise<RunRef | null> {
  const rows = await db().query<RunRow>(`${RUN_REF_SELECT} WHERE r.id = $1 AND r.workspace_id = $2 AND r.state = 'completed'`, {
    bind: [runId, workspaceId],
    type: QueryTypes.SELECT,
  });
  return rows[0] ? toRun(rows[0]) : null;
}

export async function latestCompletedRun(workspaceId: number): Promise<RunRef | null> {
  const rows = await db().query<RunRow>(
    `${RUN_REF_SELECT} WHERE r.workspace_id = $1 AND r.state = 'completed' ORDER BY r.finished_at DESC NULLS LAST, r.id DESC LIMIT 1`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return rows[0] ? toRun(rows[0]) : null;
}

/**
 * The runs this subscription's SENT digests reported, newest digest first
 * (each run once): the only baselines a digest may compare with. Skipped and
 * failed deliveries reported nothing to anyone.
 */
export async function deliveredRuns(subscriptionId: number, workspaceId: number, limit = 200): Promise<RunRef[]> {
  const rows = await db().query<RunRow>(
    `SELECT id, number, workspace_id, panel_version_id, boundary_version_id, panel_id, panel_name, panel_version, params FROM (
        SELECT DISTINCT ON (r.id) r.id, r.number, r.workspace_id, r.panel_version_id, r.boundary_version_id, pv.panel_id, p.name AS panel_name, pv.version AS panel_version,
               r.params, d.sent_at, d.id AS delivery_id
          FROM digest_deliveries d
          JOIN runs r ON r.id = d.covered_run_id AND r.workspace_id = $2 AND r.state = 'completed'
          JOIN panel_versions pv ON pv.id = r.panel_version_id
          JOIN panels p ON p.id = pv.panel_id
         WHERE d.subscription_id = $1 AND d.status = 'sent'
         ORDER BY r.id, d.sent_at DESC NULLS LAST, d.id DESC
      ) x ORDER BY sent_at DESC NULLS LAST, delivery_id DESC LIMIT $3`,
    { bind: [subscriptionId, workspaceId, limit], type: QueryTypes.SELECT },
  );
  return rows.map(toRun);
}

/** The results of a run as the digest compares them (local clusters: significant regions only). */
export async function digestRows(runId: number): Promise<DigestResultRow[]> {
  const rows = await db().query<{
    indicator_code: string;
    period_key: string;
    period_index: number;
    i: number | null;
    expected_i: number | null;
    delta_i: number | null;
    significance: SignificanceClass | null;
    ids: string[] | null;
    cluster: string[] | null;
  }>(
    `SELECT indicator_code, period_key, period_index, i, expected_i, delta_i, significance, local->'ids' AS ids, local->'cluster' AS cluster
       FROM run_results WHERE run_id = $1 ORDER BY indicator_code, period_index`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  const significant = new Set<string>(LOCAL_CLUSTER_CLASSES);
  return rows.map((r) => {
    let localClusters: Record<string, string> | null = null;
    if (r.ids && r.cluster) {
      localClusters = {};
      r.ids.forEach((id, k) => {
        const c = r.cluster?.[k];
        if (c && significant.has(c) && localClusters) localClusters[id] = c;
      });
    }
    return {
      indicator: r.indicator_code,
      period: r.period_key,
      periodIndex: Number(r.period_index),
      I: r.i,
      expectedI: r.expected_i,
      deltaI: r.delta_i,
      significance: r.significance,
      localClusters,
    };
  });
}

export function chartPoints(rows: readonly DigestResultRow[], indicator: string): ChartPoint[] {
  return rows.filter((r) => r.indicator === indicator).map((r) => ({ period: r.period, I: r.I, expectedI: r.expectedI, significance: r.significance }));
}

export async function regionNames(boundaryVersionId: number): Promise<Map<string, string>> {
  const rows = await db().query<{ code: string; name: string | null }>("SELECT code, name FROM regions WHERE boundary_version_id = $1", {
    bind: [boundaryVersionId],
    type: QueryTypes.SELECT,
  });
  return new Map(rows.map((r) => [r.code, r.name ?? r.code]));
}

export async function indicatorLabels(workspaceId: number): Promise<Map<string, string>> {
  const rows = await db().query<{ code: string; label: string }>("SELECT code, label FROM indicators WHERE workspace_id = $1", {
    bind: [workspaceId],
    type: QueryTypes.SELECT,
  });
  return new Map(rows.map((r) => [r.code, r.label]));
}

/**
 * Indicators a subscriber can pick: those with an indicator record the reader
 * may see (lib/intake/published-panel `indicatorVisibleSql`) or analysed by a completed run.
 */
export async function pickableIndicators(workspaceId: number, visibility: IndicatorVisibility): Promise<{ code: string; label: string }[]> {
  const rows = await db().query<{ code: string; label: string | null }>(
    `SELECT code, max(label) AS label FROM (
        SELECT i.code, i.label FROM indicators i WHERE i.workspace_id = $1 AND ${indicatorVisibleSql("i", visibility)}
        UNION ALL
        SELECT DISTINCT rp.indicator_code, NULL FROM run_pieces rp JOIN runs r ON r.id = rp.run_id WHERE r.workspace_id = $1 AND r.state = 'completed'
      ) x GROUP BY code ORDER BY code`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ code: r.code, label: r.label ?? r.code }));
}
