/**
 * Run-wide significance of the global results. The family of tests is every
 * computed indicator-period of the run, so the correction (docs/statistics.md,
 * Cautions: "many indicator-periods tested at once produce false positives
 * unless corrected") covers the whole run.
 */
import { adjustPValues } from "@/lib/spatial";
import { CORRECTION_LABELS, type ResolvedRunParams } from "./schemas";
import type { DecidingPSource, PeriodResult, RowSignificance, SignificanceClass } from "./types";

/** The p-value that decides a row's class: the two-sided permutation pseudo p, else the randomisation p. */
export function decidingP(row: Pick<PeriodResult, "permutation" | "moran">): { p: number | null; source: DecidingPSource | null } {
  if (row.permutation) return { p: row.permutation.pTwoSided, source: "permutation" };
  if (row.moran && Number.isFinite(row.moran.pRandomisation)) return { p: row.moran.pRandomisation, source: "randomisation" };
  return { p: null, source: null };
}

export interface ClassifiableRow {
  readonly decidingP: number | null;
  readonly I: number | null;
  readonly expectedI: number | null;
}

/**
 * Adjusts the deciding p-values of all rows of a run together and classes
 * each: adjusted p ≤ alpha with I above E[I] is "clustering", below E[I]
 * "dispersion"; otherwise "not-significant". Rows without a p (not computed)
 * get nulls and do not count among the m tests.
 *
 * @example
 *   classifyRows([{ decidingP: 0.001, I: 0.4, expectedI: -0.004 }], 0.05, "fdr")[0].significance; // "clustering"
 */
export function classifyRows(rows: readonly ClassifiableRow[], alpha: number, correction: ResolvedRunParams["correction"]): RowSignificance[] {
  const adjusted = adjustPValues(
    rows.map((r) => r.decidingP),
    correction,
  );
  return rows.map((row, i) => {
    const adjustedP = adjusted[i];
    if (adjustedP === null || row.I === null || row.expectedI === null) return { decidingP: row.decidingP, adjustedP: null, significance: null };
    const significance: SignificanceClass = adjustedP <= alpha ? (row.I > row.expectedI ? "clustering" : "dispersion") : "not-significant";
    return { decidingP: row.decidingP, adjustedP, significance };
  });
}

/** A sentence saying which p and which correction decide the classes of a run. */
export function significanceBasis(params: Pick<ResolvedRunParams, "permutations" | "correction" | "alpha">, tests: number): string {
  const p = `the two-sided permutation pseudo p (${params.permutations.toLocaleString("en-GB")} permutations)`;
  const correction =
    params.correction === "none"
      ? "with no correction for the"
      : `adjusted by ${CORRECTION_LABELS[params.correction]} across the`;
  return `Classes use ${p}, ${correction} ${tests} computed indicator-period${tests === 1 ? "" : "s"} of this run, at α = ${params.alpha}.`;
}
