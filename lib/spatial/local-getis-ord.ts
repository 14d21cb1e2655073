/**
 * Local Getis–Ord statistics Gi and Gi* with z-scores and conditional
 * permutation inference.
 */
import type { PermutationOptions, SpatialWeights } from "./types";
import { checkedValues, requireRegions } from "./internal";
import { normalTailProbabilities } from "./distributions";
import { checkPermutationCount } from "./random";
import { conditionalLagPermutations, sequentialExtremesOf } from "./local-permutation";
import { adjustPValues, type Correction } from "./multiple-testing";
import type { PValueSource } from "./local-moran";

/** One region of a {@link localGetisOrd} result. */
export interface LocalGetisOrdRegion {
  readonly id: string;
  /** G_i = Σ_{j≠i} w_ij x_j / Σ_{j≠i} x_j, or G_i* = Σ_j w*_ij x_j / Σ_j x_j (self included). */
  readonly G: number;
  readonly expectedG: number;
  readonly varianceG: number;
  /** Standardised statistic (Ord & Getis 1995); null when undefined (no neighbours, zero variance). */
  readonly z: number | null;
  /** Two-sided normal p-value of z. */
  readonly p: number | null;
  /** Conditional permutation: two-sided min(1, 2·min(greater, less)). */
  readonly pseudoP: number | null;
  readonly pseudoPGreater: number | null;
  readonly pseudoPLess: number | null;
  /** Permutations this region used: R, or fewer when sequential stopping ended its sampling early; null without permutations or neighbours. */
  readonly permutationsUsed: number | null;
  readonly neighbours: number;
}

/** Result of {@link localGetisOrd}. */
export interface LocalGetisOrdResult {
  readonly n: number;
  /** true for Gi* (region i included with a self-weight), false for Gi. */
  readonly star: boolean;
  readonly permutations: number;
  readonly regions: readonly LocalGetisOrdRegion[];
}

/** Options of {@link localGetisOrd}. */
export interface LocalGetisOrdOptions extends PermutationOptions {
  /** Gi* (default true) or Gi. */
  readonly star?: boolean;
  /**
   * Self-weight w_ii for Gi*. Default: 1 for binary or general weights; for
   * row-standardised weights the mean of the row's weights, after which the
   * row (self included) is re-standardised — for W built from binary links
   * this gives w_ii = w_ij = 1/(k_i + 1), i.e. row-standardised (B + I).
   */
  readonly selfWeight?: number;
  /**
   * Sequential p-values (Besag & Clifford 1991), as in `localMoran`: with h a
   * region stops drawing once both tails hold h permuted values as extreme as
   * the observed one, and its p is then h/L. Default null: every region uses all R.
   */
  readonly sequentialExtremes?: number | null;
}

/**
 * Local Getis–Ord statistics (A. Getis & J. K. Ord 1992, Geographical
 * Analysis 24(3); standardised form of J. K. Ord & A. Getis 1995,
 * "Local spatial autocorrelation statistics: distributional issues and an
 * application", Geographical Analysis 27(4)).
 *
 * Gi* (star, region i counted among its own neighbours with weight w_ii):
 *   x̄ = Σ_j x_j / n,  s² = Σ_j x_j² / n − x̄²,  W_i = Σ_j w_ij,  S_1i = Σ_j w_ij²,
 *   z_i* = (Σ_j w_ij x_j − W_i x̄) / ( s · sqrt( (n S_1i − W_i²) / (n − 1) ) ),
 *   G_i* = Σ_j w_ij x_j / Σ_j x_j,  E = W_i / n,
 *   Var = (n S_1i − W_i²) s² / (n² (n−1) x̄²)   (moments under total randomisation).
 * Gi (no star): the same with j ≠ i, n − 1 in place of n, and x̄_i, s_i over
 * the other n − 1 regions (moments under conditional randomisation).
 *
 * z > 0: high values around i (hot spot); z < 0: low values (cold spot).
 * G itself is reported for non-negative data; the z-score is defined for any
 * real values. The permutation test is conditional (x_i fixed, neighbours
 * drawn from the other n − 1 values; shared draws, see
 * `local-permutation.ts`); its tails refer to the z-score.
 *
 * @param values one finite number per region.
 * @param weights weights without self-links (the self term is added for Gi*).
 * @throws Error for misaligned or non-finite values, a constant variable,
 *   n < 3, self-links in the weights, a bad self-weight, bad permutation options.
 * Cost: O(n + L), plus O(R·(n + L)) for permutations.
 * @example
 *   localGetisOrd(values, binaryBand, { star: true }).regions[0].z;
 */
export function localGetisOrd(values: ArrayLike<number>, weights: SpatialWeights, options: LocalGetisOrdOptions = {}): LocalGetisOrdResult {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 3, "Local Getis–Ord G");
  const star = options.star ?? true;
  if (options.selfWeight !== undefined && !(Number.isFinite(options.selfWeight) && options.selfWeight > 0)) {
    throw new Error(`The Gi* self-weight must be finite and > 0; got ${String(options.selfWeight)}.`);
  }
  const permutations = checkPermutationCount(options.permutations ?? 0);
  if (permutations > 0 && !options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
  let total = 0;
  let totalSquares = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    total += x[i];
    totalSquares += x[i] * x[i];
    min = Math.min(min, x[i]);
    max = Math.max(max, x[i]);
  }
  if (max - min <= 1e-13 * Math.max(Math.abs(max), Math.abs(min))) {
    throw new Error(`The variable is constant across the ${n} regions; local G is undefined.`);
  }
  // Effective weights: the row, scaled (row-standardised Gi*), plus the self-weight.
  const rowScale = new Float64Array(n).fill(1);
  const self = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const start = weights.offsets[i];
    const end = weights.offsets[i + 1];
    let rowSum = 0;
    for (let p = start; p < end; p++) {
      if (weights.neighbours[p] === i) throw new Error(`Local G: region "${weights.ids[i]}" is linked to itself; pass weights without self-links.`);
      rowSum += weights.weights[p];
    }
    if (!star) continue;
    if (options.selfWeight !== undefined) {
      self[i] = options.selfWeight;
    } else if (weights.transform === "row-standardised" && end > start) {
      const k = end - start;
      // mean weight rowSum/k as self-weight, then re-standardise the row of k + 1 entries
      const withSelf = rowSum + rowSum / k;
      rowScale[i] = 1 / withSelf;
      self[i] = rowSum / k / withSelf;
    } else {
      self[i] = 1;
    }
  }
  // Scaled weights for the permutation engine (no self-links).
  const scaledWeights = weights.weights.slice();
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) scaledWeights[p] *= rowScale[i];
  }
  const engineWeights: SpatialWeights = { ...weights, weights: scaledWeights };
  const lag = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let sum = 0;
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) sum += scaledWeights[p] * x[weights.neighbours[p]];
    lag[i] = sum;
  }
  const sequentialExtremes = sequentialExtremesOf(options.sequentialExtremes, permutations);
  const counts =
    permutations > 0
      ? conditionalLagPermutations(x, engineWeights, lag, permutations, options.random as NonNullable<typeof options.random>, sequentialExtremes)
      : null;
  const regions: LocalGetisOrdRegion[] = [];
  for (let i = 0; i < n; i++) {
    const k = weights.offsets[i + 1] - weights.offsets[i];
    let Wi = self[i];
    let S1i = self[i] * self[i];
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      Wi += scaledWeights[p];
      S1i += scaledWeights[p] * scaledWeights[p];
    }
    const weightedSum = lag[i] + self[i] * x[i];
    let m: number; // number of values in the reference set
    let sum: number;
    let sumSquares: number;
    if (star) {
      m = n;
      sum = total;
      sumSquares = totalSquares;
    } else {
      m = n - 1;
      sum = total - x[i];
      sumSquares = totalSquares - x[i] * x[i];
    }
    const mean = sum / m;
    const s2 = Math.max(0, sumSquares / m - mean * mean);
    const G = weightedSum / sum;
    const expectedG = Wi / m;
    const spread = (m * S1i - Wi * Wi) / (m - 1);
    const varianceG = (spread * s2) / (m * m * mean * mean);
    const zScore = k === 0 || !(spread > 0) || !(s2 > 0) ? NaN : (weightedSum - Wi * mean) / (Math.sqrt(s2) * Math.sqrt(spread));
    let pseudoPGreater: number | null = null;
    let pseudoPLess: number | null = null;
    let pseudoP: number | null = null;
    let permutationsUsed: number | null = null;
    if (counts && k > 0) {
      // z is increasing in the neighbours' weighted sum (the self term and the
      // reference mean are fixed under conditional permutation).
      const used = counts.draws[i];
      if (used < permutations) {
        // Stopped early: Besag & Clifford's h/L (both tails have at least h extremes).
        pseudoPGreater = counts.atLeast[i] / used;
        pseudoPLess = counts.atMost[i] / used;
      } else {
        pseudoPGreater = (counts.atLeast[i] + 1) / (permutations + 1);
        pseudoPLess = (counts.atMost[i] + 1) / (permutations + 1);
      }
      permutationsUsed = used;
      pseudoP = Math.min(1, 2 * Math.min(pseudoPGreater, pseudoPLess));
    }
    regions.push({
      id: weights.ids[i],
      G,
      expectedG,
      varianceG,
      z: Number.isFinite(zScore) ? zScore : null,
      p: Number.isFinite(zScore) ? normalTailProbabilities(zScore).pTwoSided : null,
      pseudoP,
      pseudoPGreater,
      pseudoPLess,
      permutationsUsed,
      neighbours: k,
    });
  }
  return { n, star, permutations, regions };
}

/** Hot-spot class of a region: significant with z > 0, significant with z < 0, or neither. */
export type HotSpotClass = "hot" | "cold" | "not-significant";

/** Options of {@link hotSpotClasses}. */
export interface HotSpotOptions {
  /** Significance level, 0 < alpha < 1; default 0.05. */
  readonly alpha?: number;
  /** Multiple-testing correction; default `"fdr"`. */
  readonly correction?: Correction;
  /**
   * Which p decides: `"permutation"` (the two-sided pseudo p) or `"analytical"`
   * (the two-sided normal p of z). Default: permutation when the result has
   * permutations, else analytical — the rule of local Moran's clusters.
   */
  readonly pValueSource?: PValueSource;
}

/** Result of {@link hotSpotClasses}. */
export interface HotSpotClasses {
  readonly alpha: number;
  readonly correction: Correction;
  readonly pValueSource: PValueSource;
  /** Number of tests m counted by the correction (regions with a p). */
  readonly tests: number;
  /** The deciding p after the correction, per region (null: no test). */
  readonly adjustedP: readonly (number | null)[];
  readonly classes: readonly HotSpotClass[];
}

/**
 * Hot and cold spots from a {@link localGetisOrd} result: a region is
 * significant when its deciding p (two-sided; see `pValueSource`), adjusted
 * for the m regions that have a test ({@link adjustPValues}), is at most
 * alpha; it is then `"hot"` when z > 0 and `"cold"` when z < 0 (Ord & Getis
 * 1995: high values around i give a positive z). Regions without a test
 * (no neighbours, zero spread) are `"not-significant"` and not counted in m.
 *
 * @throws Error for a bad alpha or correction, or `"permutation"` on a result
 *   without permutations.
 * Cost: O(n log n).
 * @example
 *   hotSpotClasses(localGetisOrd(x, w, { permutations: 999, random }), { alpha: 0.05, correction: "fdr" }).classes;
 */
export function hotSpotClasses(result: LocalGetisOrdResult, options: HotSpotOptions = {}): HotSpotClasses {
  const alpha = options.alpha ?? 0.05;
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1; got ${String(alpha)}.`);
  const correction = options.correction ?? "fdr";
  const pValueSource = options.pValueSource ?? (result.permutations > 0 ? "permutation" : "analytical");
  if (pValueSource === "permutation" && result.permutations === 0) throw new Error('pValueSource "permutation" needs permutations > 0.');
  const deciding = result.regions.map((r) => (r.z === null ? null : pValueSource === "permutation" ? r.pseudoP : r.p));
  const adjustedP = adjustPValues(deciding, correction);
  const classes = result.regions.map((r, i): HotSpotClass => {
    const p = adjustedP[i];
    if (p === null || p > alpha || r.z === null || r.z === 0) return "not-significant";
    return r.z > 0 ? "hot" : "cold";
  });
  return { alpha, correction, pValueSource, tests: deciding.filter((p) => p !== null).length, adjustedP, classes };
}
