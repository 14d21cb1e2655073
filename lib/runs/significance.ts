/**
 * Run-wide significance of the global results. The family of tests is every
 * computed indicator-period of the run, so the correction (docs/statistics.md,
 * Cautions: "many indicator-periods tested at once produce false positives
 * unless corrected") covers the whole run.
 */
import { adjustPValues } from "@/lib/spatial";
import { CORRECTION_LABELS, type ResolvedRunParams } from "./schemas";
import type { DecidingPSource, GiStarClass, PeriodResult, RowSignificance, SignificanceClass } from "./types";

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

/** One region's Gi* as the classes need it. */
export interface GiStarTest {
  readonly neighbours: number;
  readonly z: number | null;
  /** The p that decides: the run's conditional permutation pseudo p. */
  readonly pseudoP: number | null;
}

/**
 * Classes the regions of one indicator-period under local Gi*, with the same
 * rule as local Moran's clusters: the pseudo p-values of the regions with
 * neighbours are adjusted together by the run's correction (they are the m
 * tests), and a region whose adjusted p is ≤ alpha is "hot" when its z is
 * positive, "cold" when negative. Regions without neighbours are
 * "no-neighbours" and do not count among the tests; a region whose z is
 * undefined is never significant.
 *
 * @example
 *   classifyGiStar([{ neighbours: 4, z: 3.1, pseudoP: 0.001 }, { neighbours: 0, z: null, pseudoP: null }], 0.05, "bonferroni").classes;
 *   // ["hot", "no-neighbours"]
 */
export function classifyGiStar(
  regions: readonly GiStarTest[],
  alpha: number,
  correction: ResolvedRunParams["correction"],
): { adjustedP: (number | null)[]; classes: GiStarClass[] } {
  const adjustedP = adjustPValues(
    regions.map((r) => (r.neighbours > 0 ? r.pseudoP : null)),
    correction,
  );
  const classes = regions.map((r, i): GiStarClass => {
    if (r.neighbours === 0) return "no-neighbours";
    const p = adjustedP[i];
    if (p === null || p > alpha || r.z === null || r.z === 0) return "not-significant";
    return r.z > 0 ? "hot" : "cold";
  });
  return { adjustedP, classes };
}
