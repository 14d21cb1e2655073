/**
 * What a digest says: a pure comparison of the results the subscriber's
 * previous digest reported with the current ones, filtered by the
 * subscription's scope and threshold. Results are compared only when both
 * runs were computed the same way (lib/runs/comparability.ts); a first digest
 * and a digest after a change of method say where the results stand and
 * compare nothing. No database, no rendering.
 */
import type { SignificanceClass } from "@/lib/runs/types";
import type { DigestScope, DigestThreshold } from "@/models/digest-types";
import { CLUSTER_CLASS_NAMES, SIGNIFICANT_CLUSTER_CLASSES, type SignificantClusterClass } from "@/lib/runs/cluster-classes";

/** The local cluster classes that count as a significant local cluster, named as on the map (lib/runs/cluster-classes). */
export const LOCAL_CLUSTER_CLASSES = SIGNIFICANT_CLUSTER_CLASSES;
export type LocalClusterClass = SignificantClusterClass;

export const LOCAL_CLUSTER_LABELS: Readonly<Record<LocalClusterClass, string>> = CLUSTER_CLASS_NAMES;

/** One indicator × period of a run, reduced to what a digest compares. */
export interface DigestResultRow {
  readonly indicator: string;
  readonly period: string;
  readonly periodIndex: number;
  readonly I: number | null;
  readonly expectedI: number | null;
  /** I of this period minus I of the run's previous period. */
  readonly deltaI: number | null;
  readonly significance: SignificanceClass | null;
  /** Region code → local cluster class (only significant regions need to be present). */
  readonly localClusters: Readonly<Record<string, string>> | null;
}

export interface DigestScopeSettings {
  readonly scope: DigestScope;
  readonly indicatorCodes: readonly string[];
  readonly threshold: DigestThreshold;
}

export interface ClassChangeItem {
  readonly indicator: string;
  readonly period: string;
  readonly before: SignificanceClass | null;
  readonly after: SignificanceClass | null;
}

export interface ChangeInI {
  readonly indicator: string;
  readonly period: string;
  readonly I: number;
  /** The change shown: against the same period of the previous results, else against the previous period. */
  readonly change: number;
  readonly against: "previous-results" | "previous-period";
}

export interface NewClusterGroup {
  readonly indicator: string;
  readonly period: string;
  readonly cluster: LocalClusterClass;
  readonly count: number;
  /** Region names (code when unnamed), sorted, all of them. */
  readonly regions: readonly string[];
}

/**
 * What the current results are compared with. Only a comparable baseline
 * carries rows, so a change of method can never turn into a delta.
 */
export type DigestComparison =
  /** Nothing was delivered about this panel before (or there is no run yet). */
  | { readonly kind: "first" }
  /** A previous digest reported run `runId`, computed the same way. */
  | { readonly kind: "previous-digest"; readonly runId: number; readonly rows: readonly DigestResultRow[] }
  /** Previous digests reported only runs computed differently; `sentence` says how ("weights changed from queen to rook; no comparison"). */
  | { readonly kind: "method-changed"; readonly runId: number; readonly sentence: string };

/** The comparison a digest was composed against, without its rows. */
export type DigestBaseline =
  | { readonly kind: "first" }
  | { readonly kind: "previous-digest"; readonly runId: number }
  | { readonly kind: "method-changed"; readonly runId: number; readonly sentence: string };

export interface DigestContent {
  readonly baseline: DigestBaseline;
  /**
   * With a previous-digest baseline: indicator-periods whose class changed.
   * Otherwise: the indicator-periods significant now (before is null).
   */
  readonly classChanges: readonly ClassChangeItem[];
  readonly largestChanges: readonly ChangeInI[];
  readonly newClusters: readonly NewClusterGroup[];
  /** Indicators mentioned anywhere in the digest, in first-mention order (one chart each). */
  readonly indicators: readonly string[];
  readonly empty: boolean;
}

export interface ComposeOptions {
  /** How many of the largest changes in I to list (default 5). */
  readonly largestChanges?: number;
  /** Changes in I smaller than this are not movements (default 1e-9: identical reruns say nothing). */
  readonly minimumChange?: number;
}

const key = (indicator: string, period: string) => `${indicator}\u0000${period}`;

/** Whether the subscription's scope covers `indicator`. */
export function inScope(settings: Pick<DigestScopeSettings, "scope" | "indicatorCodes">, indicator: string): boolean {
  return settings.scope === "all" || settings.indicatorCodes.includes(indicator);
}

function isLocalClusterClass(value: string): value is LocalClusterClass {
  return (LOCAL_CLUSTER_CLASSES as readonly string[]).includes(value);
}

/**
 * Composes a digest of `current` against `comparison`, keeping only the
 * indicators in scope.
 *
 * Against a previous digest's results (same method): indicator-periods whose
 * significance class changed (a period new since then counts when it is
 * significant), the largest absolute changes in I (a new period: against the
 * previous period of the run), and local clusters that are newly significant
 * (or changed class), counted by class with region names.
 *
 * A first digest compares nothing: it lists the significant indicator-periods,
 * the largest changes from one period to the next within the run, and the
 * significant local clusters. After a change of method likewise, but without
 * any change in I at all: the digest leads with the change of method and is
 * never empty while a result in scope exists.
 *
 * With the threshold "class_changes" only the class changes are kept.
 * `regionName` maps a region code to its name for the cluster lists.
 */
export function composeDigest(
  comparison: DigestComparison,
  current: readonly DigestResultRow[],
  settings: DigestScopeSettings,
  regionName: (code: string) => string = (code) => code,
  options: ComposeOptions = {},
): DigestContent {
  const limit = options.largestChanges ?? 5;
  const minimum = options.minimumChange ?? 1e-9;
  const previous = comparison.kind === "previous-digest" ? comparison.rows : [];
  const before = new Map(previous.filter((r) => inScope(settings, r.indicator)).map((r) => [key(r.indicator, r.period), r]));
  const methodChanged = comparison.kind === "method-changed";
  const rows = current
    .filter((r) => inScope(settings, r.indicator))
    .slice()
    .sort((a, b) => (a.indicator === b.indicator ? a.periodIndex - b.periodIndex : a.indicator < b.indicator ? -1 : 1));

  const classChanges: ClassChangeItem[] = [];
  const changes: ChangeInI[] = [];
  const newClusters: NewClusterGroup[] = [];

  for (const row of rows) {
    const old = before.get(key(row.indicator, row.period));
    const oldClass = old?.significance ?? null;
    const changedClass = old ? oldClass !== row.significance : row.significance === "clustering" || row.significance === "dispersion";
    if (changedClass) classChanges.push({ indicator: row.indicator, period: row.period, before: oldClass, after: row.significance });

    if (row.I !== null) {
      if (old && old.I !== null) {
        const change = row.I - old.I;
        if (Math.abs(change) > minimum) changes.push({ indicator: row.indicator, period: row.period, I: row.I, change, against: "previous-results" });
      } else if (!old && !methodChanged && row.deltaI !== null && Math.abs(row.deltaI) > minimum) {
        changes.push({ indicator: row.indicator, period: row.period, I: row.I, change: row.deltaI, against: "previous-period" });
      }
    }

    if (row.localClusters) {
      const groups = new Map<LocalClusterClass, string[]>();
      for (const [code, cluster] of Object.entries(row.localClusters)) {
        if (!isLocalClusterClass(cluster)) continue;
        if (old?.localClusters && old.localClusters[code] === cluster) continue;
        const list = groups.get(cluster) ?? [];
        list.push(regionName(code));
        groups.set(cluster, list);
      }
      for (const cluster of LOCAL_CLUSTER_CLASSES) {
        const regions = groups.get(cluster);
        if (regions?.length) newClusters.push({ indicator: row.indicator, period: row.period, cluster, count: regions.length, regions: regions.sort() });
      }
    }
  }

  const largestChanges = changes.sort((a, b) => Math.abs(b.change) - Math.abs(a.change)).slice(0, limit);
  const classOnly = settings.threshold === "class_changes";
  const kept = {
    classChanges,
    largestChanges: classOnly ? [] : largestChanges,
    newClusters: classOnly ? [] : newClusters,
  };
  const indicators: string[] = [];
  for (const item of [...kept.classChanges, ...kept.largestChanges, ...kept.newClusters]) {
    if (!indicators.includes(item.indicator)) indicators.push(item.indicator);
  }
  const baseline: DigestBaseline =
    comparison.kind === "previous-digest" ? { kind: "previous-digest", runId: comparison.runId } : comparison.kind === "method-changed" ? { kind: "method-changed", runId: comparison.runId, sentence: comparison.sentence } : { kind: "first" };
  // A change of method is news in itself, as long as the subscriber follows something in the run.
  const empty = indicators.length === 0 && !(methodChanged && rows.length > 0);
  return { baseline, ...kept, indicators, empty };
}

/** A short JSON summary of a digest for the delivery history. */
export function summariseDigest(content: DigestContent): {
  baseline: DigestBaseline;
  classChanges: number;
  largestChanges: number;
  newClusters: number;
  indicators: string[];
  empty: boolean;
} {
  return {
    baseline: content.baseline,
    classChanges: content.classChanges.length,
    largestChanges: content.largestChanges.length,
    newClusters: content.newClusters.reduce((sum, g) => sum + g.count, 0),
    indicators: [...content.indicators],
    empty: content.empty,
  };
}
