/**
 * Words for a harmonised version's provenance, shared by the Intake version
 * screen and the indicator timeline (pure: no database, safe in the browser).
 */
import type { HarmonisationView } from "@/lib/intake/harmonisation";
import type { IndicatorMethod } from "./methods";

/** "2008–2018 (11 periods)" for a run of periods, else the periods listed. */
export function periodSpan(periods: readonly string[]): string {
  if (periods.length === 0) return "none";
  if (periods.length === 1) return periods[0];
  const sorted = [...periods].sort();
  const years = sorted.map(Number);
  const consecutive = years.every((y, i) => Number.isInteger(y) && (i === 0 || y === years[i - 1] + 1));
  return consecutive ? `${sorted[0]}–${sorted[sorted.length - 1]} (${sorted.length} periods)` : sorted.join(", ");
}

export function methodLabel(method: IndicatorMethod | undefined): string {
  if (!method) return "not harmonised";
  switch (method.kind) {
    case "extensive":
      return "extensive (share-weighted sum)";
    case "intensive":
      return "intensive (mean weighted by overlap area)";
    case "intensive-by":
      return `intensive, weighted by ${method.denominator}`;
    case "rate":
      return `re-derived rate (${method.events} / ${method.population})`;
  }
}

/** How the crosswalk is named on screens: "crosswalk 3 (derived by area)". */
export function crosswalkLabel(view: HarmonisationView): string {
  const origin = view.crosswalk?.origin === "uploaded" ? "uploaded shares" : view.crosswalk?.origin === "derived" ? "derived by area" : "no longer in this workspace";
  return `crosswalk ${view.crosswalkId} (${origin})`;
}

/** The reform mark's label on a timeline: null when every period was carried (no period observed on the new boundaries). */
export function reformMarkLabel(view: HarmonisationView): string | null {
  return view.firstPeriodOnTarget ? `Carried across the ${view.firstPeriodOnTarget} reform before this` : null;
}

/** One sentence: which periods were carried, from which boundaries to which, through which crosswalk, and what was observed. */
export function carriedSentence(view: HarmonisationView): string {
  const from = view.fromBoundary ? `${view.fromBoundary.setName} v${view.fromBoundary.version}` : "the old boundaries";
  const to = view.toBoundary ? `${view.toBoundary.setName} v${view.toBoundary.version}` : "the new boundaries";
  const carried =
    view.carriedPeriods.length === 0
      ? `No period was carried across the reform onto ${to}.`
      : `Periods ${periodSpan(view.carriedPeriods)} were carried across the reform from ${from} onto ${to} through ${crosswalkLabel(view)}.`;
  const observed = view.firstPeriodOnTarget
    ? ` From ${view.firstPeriodOnTarget} on, the values are as observed on ${to}${view.continuation ? ` ('${view.continuation.panelName}' v${view.continuation.version})` : ""}.`
    : " Every period was carried; none is observed on the new boundaries.";
  return carried + observed;
}
