/**
 * How a run is named wherever runs are listed or picked: its per-workspace
 * number, the panel version it analysed, its weights rule and transform, and
 * its permutations ("Run 7 · Regional panel v3 · queen, row-standardised ·
 * 999 perm.", with " · EB-standardised" when its rates were empirical-Bayes
 * standardised). Two runs of one panel that differ in method never share a
 * label. A run that controls for covariates ends with them ("· controls
 * for heavy_industry, port_access"). Pure; used by screens, the audit trail
 * and digests alike.
 */

/** What a label needs of a run (RunSummary has all of it). */
export interface RunLabelInput {
  /** Per-workspace number (runs.number), not the global id. */
  readonly number: number;
  readonly panelName: string;
  readonly panelVersion: number;
  readonly params: {
    readonly weights: string;
    readonly transform: string;
    readonly permutations: number;
    readonly controlFor?: readonly string[];
    /** Present (the standardised rate indicators) when the run asked for empirical-Bayes rates. */
    readonly empiricalBayes?: readonly { readonly indicator: string }[];
  };
}

/** The marker of a run whose rates were empirical-Bayes standardised (the same words as `EB_MARKER` in schemas.ts). */
export const EB_LABEL = "EB-standardised";

/** True when the run standardised its rate indicators (empirical Bayes). */
export function isEmpiricalBayesRun(params: { readonly empiricalBayes?: readonly unknown[] }): boolean {
  return (params.empiricalBayes?.length ?? 0) > 0;
}

const counts = new Intl.NumberFormat("en-GB");

/** "Run 7": the short name, for sentences that already say the rest. */
export function runName(number: number): string {
  return `Run ${number}`;
}

/** A weights rule and transform in words: "queen, row-standardised", "6 nearest, binary", "distance band, row-standardised". */
export function weightsLabel(rule: string, transform: string): string {
  const r = rule === "band" ? "distance band" : rule.startsWith("knn:") ? `${rule.slice(4)} nearest` : rule;
  return `${r}, ${transform === "row-standardised" ? "row-standardised" : transform === "binary" ? "binary" : transform}`;
}

/** "Run 7 · Regional panel v3 · queen, row-standardised · 999 perm." */
export function runLabel(run: RunLabelInput): string {
  return [
    runName(run.number),
    `${run.panelName} v${run.panelVersion}`,
    weightsLabel(run.params.weights, run.params.transform),
    `${counts.format(run.params.permutations)} perm.`,
    ...(isEmpiricalBayesRun(run.params) ? [EB_LABEL] : []),
    ...(run.params.controlFor?.length ? [controlForLabel(run.params.controlFor)] : []),
  ].join(" · ");
}

/** "controls for heavy_industry, port_access": the covariates of a run, by code. */
export function controlForLabel(codes: readonly string[]): string {
  return `controls for ${codes.join(", ")}`;
}
