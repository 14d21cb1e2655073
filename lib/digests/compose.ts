/**
 * What a digest says: a pure comparison of the results a subscriber saw last
 * (the previous run) with the current ones, filtered by the subscription's
 * scope and threshold. No database, no rendering.
 */
import type { SignificanceClass } from "@/lib/runs/types";
import type { DigestScope, DigestThreshold } from "@/models/digest-types";

/** The local cluster classes that count as a significant local cluster. */
export const LOCAL_CLUSTER_CLASSES = ["HH", "LL", "HL", "LH"] as const;
export type LocalClusterClass = (typeof LOCAL_CLUSTER_CLASSES)[number];

export const LOCAL_CLUSTER_LABELS: Record<LocalClusterClass, string> = {
  HH: "High-High",
  LL: "Low-Low",
  HL: "High-Low",
  LH: "Low-High",
};

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

export interface DigestContent {
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
 * Compares `previous` (what the subscriber's last digest covered; empty for a
 * first digest) with `current`, keeps only the indicators in scope, and lists:
 * indicator-periods whose significance class changed (a period new since the
 * previous results counts as a change when it is significant), the largest
 * absolute changes in I, and local clusters that are newly significant (or
 * changed class), counted by class with region names. With the threshold
 * "class_changes" only the class changes are kept.
 *
 * `regionName` maps a region code to its name for the cluster lists.
 */
export function composeDigest(
  previous: readonly DigestResultRow[],
  current: readonly DigestResultRow[],
  settings: DigestScopeSettings,
  regionName: (code: string) => string = (code) => code,
  options: ComposeOptions = {},
): DigestContent {
  const limit = options.largestChanges ?? 5;
  const minimum = options.minimumChange ?? 1e-9;
  const before = new Map(previous.filter((r) => inScope(settings, r.indicator)).map((r) => [key(r.indicator, r.period), r]));
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
      } else if (!old && row.deltaI !== null && Math.abs(row.deltaI) > minimum) {
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
  return { ...kept, indicators, empty: indicators.length === 0 };
}

/** A short JSON summary of a digest for the delivery history. */
export function summariseDigest(content: DigestContent): { classChanges: number; largestChanges: number; newClusters: number; indicators: string[]; empty: boolean } {
  return {
    classChanges: content.classChanges.length,
    largestChanges: content.largestChanges.length,
    newClusters: content.newClusters.reduce((sum, g) => sum + g.count, 0),
    indicators: [...content.indicators],
    empty: content.empty,
  };
}
