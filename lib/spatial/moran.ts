/**
 * Global Moran's I with analytical and permutation inference.
 */
import type { AnalyticalInference, PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import { weightsSums, type WeightsSums } from "./weights/summary";
import { centred, checkedValues, requireRegions, spatialLagInto } from "./internal";
import { normalTailProbabilities } from "./distributions";
import { checkPermutationCount } from "./random";
import { globalPermutationSums, summarisePermutations } from "./permutation";

/** Result of {@link globalMoran}. */
export interface GlobalMoranResult {
  /** Number of regions in the analysis. */
  readonly n: number;
  /** I = (n/S0) · ΣΣ w_ij z_i z_j / Σ z_i². */
  readonly I: number;
  /** E[I] = −1/(n−1) under both null hypotheses. */
  readonly expectedI: number;
  /** S0, S1, S2 of the weights used. */
  readonly sums: WeightsSums;
  /** Sample kurtosis b2 = n Σz⁴ / (Σz²)². */
  readonly kurtosis: number;
  /** Inference assuming the values are independent normal draws. */
  readonly normality: AnalyticalInference;
  /** Inference under random relabelling of the observed values (uses b2). */
  readonly randomisation: AnalyticalInference;
  /** Permutation inference, or null when no permutations were requested. */
  readonly permutation: PermutationSummary | null;
  /** The R permuted values of I (only with `keepPermutedValues`), else null. */
  readonly permutedValues: Float64Array | null;
}

/** Options of {@link globalMoran}. */
export interface GlobalMoranOptions extends PermutationOptions {
  /** Also return the R permuted values of I (for panels and paired tests). */
  readonly keepPermutedValues?: boolean;
}

/**
 * Moments of Moran's I under normality and randomisation (Cliff & Ord 1981,
 * "Spatial Processes: Models & Applications", Pion, §1.5 and §2.3):
 *
 *   E[I]        = −1/(n−1)
 *   E_N[I²]     = (n² S1 − n S2 + 3 S0²) / ((n² − 1) S0²)
 *   E_R[I²]     = { n[(n² − 3n + 3) S1 − n S2 + 3 S0²] − b2[(n² − n) S1 − 2n S2 + 6 S0²] }
 *                 / ((n−1)(n−2)(n−3) S0²)
 *   Var = E[I²] − E[I]²
 *
 * @param n regions, ≥ 4 (the randomisation formula divides by n − 3).
 * @param sums S0, S1, S2 of the weights.
 * @param kurtosis b2 = n Σz⁴ / (Σz²)².
 * @throws Error when n < 4 or S0 = 0.
 * Cost: O(1).
 * @example
 *   moranMoments(100, weightsSums(w), 3).randomisationVariance;
 */
export function moranMoments(
  n: number,
  sums: WeightsSums,
  kurtosis: number,
): { expected: number; normalityVariance: number; randomisationVariance: number } {
  requireRegions(n, 4, "The variance of Moran's I");
  const { S0, S1, S2 } = sums;
  if (!(S0 > 0)) throw new Error("Moran's I needs at least one link between regions (S0 = 0).");
  const expected = -1 / (n - 1);
  const S0sq = S0 * S0;
  const normalitySecond = (n * n * S1 - n * S2 + 3 * S0sq) / ((n * n - 1) * S0sq);
  const randomisationSecond =
    (n * ((n * n - 3 * n + 3) * S1 - n * S2 + 3 * S0sq) - kurtosis * ((n * n - n) * S1 - 2 * n * S2 + 6 * S0sq)) /
    ((n - 1) * (n - 2) * (n - 3) * S0sq);
  return {
    expected,
    normalityVariance: normalitySecond - expected * expected,
    randomisationVariance: randomisationSecond - expected * expected,
  };
}

/** The observed part of {@link globalMoran}: everything but the permutation test. */
export interface ObservedMoran {
  readonly I: number;
  readonly expectedI: number;
  readonly kurtosis: number;
  readonly normality: AnalyticalInference;
  readonly randomisation: AnalyticalInference;
  /** n / (S0 Σz²): turns a permuted Σ_i Σ_j w_ij z_i z_j into a permuted I. */
  readonly scale: number;
}

/**
 * Moran's I of the centred values with its analytical inference (see
 * {@link globalMoran}); shared by {@link globalMoran} and `globalStatistics`.
 *
 * @param z centred values x − x̄, aligned with `weights.ids`, n ≥ 4.
 * @param sumSquares Σ z².
 * @param sums S0, S1, S2 of `weights`.
 * @throws Error when n < 4 or S0 = 0.
 * Cost: O(n + L).
 * @example
 *   observedMoran(z, sumSquares, w, weightsSums(w)).I;
 */
export function observedMoran(z: Float64Array, sumSquares: number, weights: SpatialWeights, sums: WeightsSums): ObservedMoran {
  const n = z.length;
  if (!(sums.S0 > 0)) throw new Error("Moran's I needs at least one link between regions (S0 = 0).");
  const lag = spatialLagInto(weights, z, new Float64Array(n));
  let crossProduct = 0;
  let fourth = 0;
  for (let i = 0; i < n; i++) {
    crossProduct += z[i] * lag[i];
    fourth += z[i] ** 4;
  }
  const scale = n / (sums.S0 * sumSquares);
  const I = scale * crossProduct;
  const kurtosis = (n * fourth) / (sumSquares * sumSquares);
  const moments = moranMoments(n, sums, kurtosis);
  const inference = (variance: number): AnalyticalInference => {
    const zScore = (I - moments.expected) / Math.sqrt(variance);
    return { variance, z: zScore, ...normalTailProbabilities(zScore) };
  };
  return {
    I,
    expectedI: moments.expected,
    kurtosis,
    normality: inference(moments.normalityVariance),
    randomisation: inference(moments.randomisationVariance),
    scale,
  };
}

/**
 * Global Moran's I (P. A. P. Moran 1950, Biometrika 37; moments from Cliff &
 * Ord 1981):
 *
 *   I = (n / S0) · Σ_i Σ_j w_ij z_i z_j / Σ_i z_i²,   z_i = x_i − x̄.
 *
 * Reports E[I] = −1/(n−1), the variance, z = (I − E[I])/sd and the normal
 * p-values (greater, less, two-sided) under normality and under
 * randomisation, and optionally a permutation test (see `permutation.ts` for
 * the p-value convention).
 *
 * @param values x, one finite number per region, aligned with `weights.ids`.
 * @param weights the weights (any transform; islands allowed, their lag is 0).
 * @param options permutations (0 or 99..99,999) and a seeded random source.
 * @throws Error when lengths differ, a value is not finite, the variable is
 *   constant, n < 4, there are no links, or permutations are requested without
 *   a random source or outside 99..99,999.
 * Cost: O(n + L log k) analytically, plus O(R·(n + L/2)) for R permutations.
 * @example
 *   // a 2-colour checkerboard on a rook lattice with binary weights: I = −1
 *   globalMoran([1, 0, 1, 0, 1, 0, 1, 0, 1], rookLattice3x3).I;
 */
export function globalMoran(
  values: ArrayLike<number>,
  weights: SpatialWeights,
  options: GlobalMoranOptions = {},
): GlobalMoranResult {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 4, "Moran's I");
  const { z, sumSquares } = centred(x, weights);
  const sums = weightsSums(weights);
  const observed = observedMoran(z, sumSquares, weights, sums);
  const permutations = checkPermutationCount(options.permutations ?? 0);
  let draws: Float64Array | null = null;
  if (permutations > 0) {
    if (!options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
    draws = globalPermutationSums(z, weights, permutations, options.random).crossProducts;
  }
  return moranResult(n, sums, observed, draws, options.keepPermutedValues === true);
}

/**
 * Assembles a {@link GlobalMoranResult} from the observed part and the R
 * permuted numerators Σ_i Σ_j w_ij z_i z_j (scaled in place to values of I),
 * or null for no permutation test.
 *
 * Cost: O(R log R).
 */
export function moranResult(
  n: number,
  sums: WeightsSums,
  observed: ObservedMoran,
  crossProducts: Float64Array | null,
  keepPermutedValues: boolean,
): GlobalMoranResult {
  let permutation: PermutationSummary | null = null;
  let permutedValues: Float64Array | null = null;
  if (crossProducts !== null) {
    for (let r = 0; r < crossProducts.length; r++) crossProducts[r] *= observed.scale;
    permutation = summarisePermutations(observed.I, crossProducts, 1);
    if (keepPermutedValues) permutedValues = crossProducts;
  }
  return {
    n,
    I: observed.I,
    expectedI: observed.expectedI,
    sums,
    kurtosis: observed.kurtosis,
    normality: observed.normality,
    randomisation: observed.randomisation,
    permutation,
    permutedValues,
  };
}
