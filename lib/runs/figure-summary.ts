/**
 * The one-sentence text alternative of each map, scatter plot and chart: what a
 * sighted reader takes from the figure at a glance, for screen readers and for
 * anyone who prefers words. components/ui/figure-table.tsx shows it beside the
 * figure's data table. Pure; no React.
 */
import type { ClusterClass } from "@/lib/spatial";
import { CLUSTER_CLASS_NAMES, CLUSTER_CLASS_ORDER } from "./cluster-classes";
import { GI_STAR_CLASS_NAMES, GI_STAR_CLASS_ORDER, giStarMapLabel } from "./gi-star-classes";
import { formatValue } from "./number-format";
import type { GiStarClass } from "./types";

function num(value: number, unit = ""): string {
  return formatValue(value, { unit });
}

function plural(n: number, one: string, many = `${one}s`): string {
  return `${n} ${n === 1 ? one : many}`;
}

function classCounts<C extends string>(order: readonly C[], names: Readonly<Record<C, string>>, counts: Readonly<Record<C, number>>): string {
  const shown = order.filter((c) => (counts[c] ?? 0) > 0).map((c) => `${counts[c]} ${names[c]}`);
  return shown.length ? shown.join(", ") : "no regions";
}

/** "Local clusters of Unemployment rate in 2015: 12 <HH name>, 9 <LL name>, 219 Not significant (240 regions)." (class names from cluster-classes.ts) */
export function clusterMapSummary(indicator: string, period: string, counts: Readonly<Record<ClusterClass, number>> | null): string {
  if (!counts) return `Local clusters of ${indicator} in ${period}: no local results were stored for this period.`;
  const total = CLUSTER_CLASS_ORDER.reduce((s, c) => s + (counts[c] ?? 0), 0);
  return `Local clusters of ${indicator} in ${period}: ${classCounts(CLUSTER_CLASS_ORDER, CLUSTER_CLASS_NAMES, counts)} (${plural(total, "region")}).`;
}

/** The Gi* map's label, then its class counts with the names of gi-star-classes.ts, e.g. "…: 14 <hot name>, 11 <cold name>, … (240 regions)." */
export function giStarMapSummary(indicator: string, period: string, counts: Readonly<Record<GiStarClass, number>> | null): string {
  if (!counts) return `${giStarMapLabel(indicator, period)}: no Gi* results were stored for this period.`;
  const total = GI_STAR_CLASS_ORDER.reduce((s, c) => s + (counts[c] ?? 0), 0);
  return `${giStarMapLabel(indicator, period)}: ${classCounts(GI_STAR_CLASS_ORDER, GI_STAR_CLASS_NAMES, counts)} (${plural(total, "region")}).`;
}

/** "Unemployment rate in 2015 ranges from 3.1 % (Aarveld) to 14.2 % (Zandpoort), median 6.0 %; 2 regions have no value." */
export function choroplethSummary(
  indicator: string,
  period: string,
  values: Readonly<Record<string, number | null | undefined>>,
  options: { unit?: string; names?: Readonly<Record<string, string | null>> } = {},
): string {
  const { unit = "", names = {} } = options;
  const present = Object.entries(values).filter((e): e is [string, number] => typeof e[1] === "number" && Number.isFinite(e[1]));
  const missing = Object.keys(values).length - present.length;
  const missingText = missing > 0 ? `; ${plural(missing, "region")} ${missing === 1 ? "has" : "have"} no value` : "";
  if (present.length === 0) return `${indicator} in ${period}: no region has a value${missingText}.`;
  const sorted = [...present].sort((x, y) => x[1] - y[1]);
  const name = (id: string) => names[id] ?? id;
  const [lowId, low] = sorted[0];
  const [highId, high] = sorted[sorted.length - 1];
  const mid = sorted.length % 2 ? sorted[(sorted.length - 1) / 2][1] : (sorted[sorted.length / 2 - 1][1] + sorted[sorted.length / 2][1]) / 2;
  return `${indicator} in ${period} ranges from ${num(low, unit)} (${name(lowId)}) to ${num(high, unit)} (${name(highId)}), median ${num(mid, unit)}, over ${plural(present.length, "region")}${missingText}.`;
}

/** "Moran scatter plot of Unemployment rate in 2015: 240 regions, slope 0.512; 180 of them lie in the upper-right or lower-left quadrants …" */
export function scatterSummary(indicator: string, period: string, points: readonly { x: number; y: number }[], slope: number): string {
  const agree = points.filter((p) => p.x * p.y > 0).length;
  return `Moran scatter plot of ${indicator} in ${period}: ${plural(points.length, "region")}, slope ${num(slope)}; ${agree} of them lie in the ${CLUSTER_CLASS_NAMES.HH} or ${CLUSTER_CLASS_NAMES.LL} quadrants (value and neighbours' average on the same side of the mean).`;
}

/** "Moran's I of Unemployment rate, 2008–2024: lowest 0.102 in 2009, highest 0.611 in 2014, last 0.233 in 2024." */
export function seriesSummary(title: string, points: readonly { label: string; value: number | null | undefined }[], unit = ""): string {
  const present = points.filter((p): p is { label: string; value: number } => typeof p.value === "number" && Number.isFinite(p.value));
  if (present.length === 0) return `${title}: no values.`;
  const span = points.length > 1 ? `, ${points[0].label}–${points[points.length - 1].label}` : `, ${points[0].label}`;
  if (present.length === 1) return `${title}${span}: ${num(present[0].value, unit)} in ${present[0].label}.`;
  let low = present[0];
  let high = present[0];
  for (const p of present) {
    if (p.value < low.value) low = p;
    if (p.value > high.value) high = p;
  }
  const last = present[present.length - 1];
  const missing = points.length - present.length;
  return `${title}${span}: lowest ${num(low.value, unit)} in ${low.label}, highest ${num(high.value, unit)} in ${high.label}, last ${num(last.value, unit)} in ${last.label}${missing ? `; ${plural(missing, "period")} without a value` : ""}.`;
}
