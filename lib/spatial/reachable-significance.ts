/**
 * Can a permutation test reach significance at all? The smallest pseudo p a
 * test with R permutations can give is 1/(R+1) per tail, so the folded
 * two-sided value is 2/(R+1) (the engine never gives less: p = (M+1)/(R+1)). A
 * correction for m tests then sets the bar a single region must clear:
 *
 * - none: p ≤ α;
 * - Bonferroni: m·p ≤ α, i.e. p ≤ α/m;
 * - false discovery rate (Benjamini–Hochberg 1995): the step-up rule rejects
 *   the k smallest p when p_(k) ≤ kα/m. A region alone needs p ≤ α/m as under
 *   Bonferroni; k regions that all sit at the smallest attainable p pass
 *   together once k ≥ m·p_min/α. So under FDR an unreachable lone threshold
 *   means "only if at least k regions reach the smallest p", not "never"
 *   (unless p_min > α, when nothing can pass).
 *
 * The number of permutations that makes a lone region reachable is the least R
 * with tails·1/(R+1) ≤ α/m (α for no correction). Common practice is to round
 * that up to a count ending in 9s (999, 9,999, 99,999).
 */
import type { Correction } from "./multiple-testing";

/** Which permutation p decides: the folded two-sided value (2 tails) or one tail. */
export type PermutationAlternative = "two-sided" | "one-sided";

export interface ReachableSignificance {
  /** Smallest pseudo p the test can give: tails/(R+1), capped at 1. */
  readonly smallestP: number;
  /** The p a region must reach on its own to be significant after the correction. */
  readonly loneThreshold: number;
  /** True when a single region at the smallest p is significant on its own. */
  readonly loneReachable: boolean;
  /**
   * How many regions must all reach the smallest p for any to be significant:
   * 1 when a lone region can pass; under FDR possibly more; null when no number
   * of regions suffices (Bonferroni or none with an unreachable threshold, or
   * FDR with p_min > α, or more regions needed than there are tests).
   */
  readonly regionsNeeded: number | null;
  /** Least R for which a lone region at the smallest p passes. */
  readonly permutationsNeeded: number;
  /** permutationsNeeded rounded up to the next count of the form 10^k − 1 (99, 999, 9,999 …). */
  readonly suggestedPermutations: number;
}

/**
 * Reachability of permutation significance for `tests` tests at `alpha`.
 *
 * @throws Error for R < 1, tests < 1, alpha outside (0, 1) or an unknown correction.
 * Cost: O(1).
 * @example
 *   reachableSignificance({ permutations: 999, tests: 49, alpha: 0.05, correction: "bonferroni" });
 *   // smallestP 0.002 > 0.05/49 ≈ 0.00102: loneReachable false, permutationsNeeded 1959, suggested 9999
 */
export function reachableSignificance(options: {
  permutations: number;
  tests: number;
  alpha: number;
  correction: Correction;
  alternative?: PermutationAlternative;
}): ReachableSignificance {
  const { permutations, tests, alpha, correction } = options;
  const tails = (options.alternative ?? "two-sided") === "two-sided" ? 2 : 1;
  if (!Number.isInteger(permutations) || permutations < 1) throw new Error(`Permutations must be a whole number ≥ 1; got ${String(permutations)}.`);
  if (!Number.isInteger(tests) || tests < 1) throw new Error(`The number of tests must be a whole number ≥ 1; got ${String(tests)}.`);
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1; got ${String(alpha)}.`);
  if (correction !== "none" && correction !== "bonferroni" && correction !== "fdr") {
    throw new Error(`Correction must be "none", "bonferroni" or "fdr"; got "${String(correction)}".`);
  }
  const smallestP = Math.min(1, tails / (permutations + 1));
  const loneThreshold = correction === "none" ? alpha : alpha / tests;
  // A tiny relative slack keeps exact boundary cases (e.g. 2/1000 vs 0.002) on the passing side.
  const passes = (p: number, bar: number) => p <= bar * (1 + 1e-12);
  const loneReachable = passes(smallestP, loneThreshold);
  let regionsNeeded: number | null = loneReachable ? 1 : null;
  if (!loneReachable && correction === "fdr" && passes(smallestP, alpha)) {
    const k = Math.ceil((tests * smallestP) / alpha - 1e-12);
    regionsNeeded = k <= tests ? k : null;
  }
  const permutationsNeeded = Math.max(1, Math.ceil(tails / loneThreshold - 1 - 1e-9));
  let suggestedPermutations = 9;
  while (suggestedPermutations < permutationsNeeded) suggestedPermutations = suggestedPermutations * 10 + 9;
  return { smallestP, loneThreshold, loneReachable, regionsNeeded, permutationsNeeded, suggestedPermutations };
}
