/**
 * Geary's C with analytical and permutation inference.
 */
import type { AnalyticalInference, PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import { weightsSums, type WeightsSums } from "./weights/summary";
import { centred, checkedValues, requireRegions } from "./internal";
import { normalTailProbabilities } from "./distributions";
import { checkPermutationCount } from "./random";
import { globalPermutationSums, summarisePermutations } from "./permutation";

/** Result of {@link gearyC}. */
export interface GearyResult {
  readonly n: number;
  /** C = (n−1) ΣΣ w_ij (x_i − x_j)² / (2 S0 Σ z²). */
  readonly C: number;
  /** E[C] = 1 under both null hypotheses. */
  readonly expectedC: number;
  readonly sums: WeightsSums;
  /** Sample kurtosis b2 = n Σz⁴ / (Σz²)². */
  readonly kurtosis: number;
  /** Inference assuming independent normal values. */
  readonly normality: AnalyticalInference;
  /** Inference under random relabelling of the observed values. */
  readonly randomisation: AnalyticalInference;
  /** Permutation inference, or null when R = 0. */
  readonly permutation: PermutationSummary | null;
}

/**
 * Geary's contiguity ratio C (R. C. Geary 1954, The Incorporated Statistician
 * 5; moments from Cliff & Ord 1981, "Spatial Processes", §1.5):
 *
 *   C = (n − 1) Σ_i Σ_j w_ij (x_i − x_j)² / (2 S0 Σ_i z_i²),   E[C] = 1,
 *   Var_N(C) = [(2 S1 + S2)(n − 1) − 4 S0²] / [2 (n + 1) S0²],
 *   Var_R(C) = { (n−1) S1 [n² − 3n + 3 − (n−1) b2]
 *               − ¼ (n−1) S2 [n² + 3n − 6 − (n² − n + 2) b2]
 *               + S0² [n² − 3 − (n−1)² b2] } / [n (n−2)(n−3) S0²].
 *
 * C < 1 indicates positive autocorrelation (neighbours alike), so evidence of
 * positive autocorrelation is in the lower tail: read `pLess`.
 *
 * @param values one finite number per region, aligned with `weights.ids`.
 * @throws Error for misaligned or non-finite values, a constant variable,
 *   n < 4, no links, or bad permutation options.
 * Cost: O(n + L log k), plus O(R·(n + L/2)) for permutations.
 * @example
 *   gearyC([1, 0, 1, 0, 1, 0, 1, 0, 1], rook3x3Binary).C; // > 1: neighbours differ
 */
export function gearyC(values: ArrayLike<number>, weights: SpatialWeights, options: PermutationOptions = {}): GearyResult {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 4, "Geary's C");
  const { z, sumSquares } = centred(x, weights);
  const sums = weightsSums(weights);
  const observed = observedGeary(z, sumSquares, weights, sums);
  const permutations = checkPermutationCount(options.permutations ?? 0);
  let draws: Float64Array | null = null;
  if (permutations > 0) {
    if (!options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
    draws = globalPermutationSums(z, weights, permutations, options.random, { squaredDifferences: true }).squaredDifferences;
  }
  return gearyResult(n, sums, observed, draws);
}

/** The observed part of {@link gearyC}: everything but the permutation test. */
export interface ObservedGeary {
  readonly C: number;
  readonly kurtosis: number;
  readonly normality: AnalyticalInference;
  readonly randomisation: AnalyticalInference;
  /** (n − 1) / (2 S0 Σz²): turns a permuted Σ_i Σ_j w_ij (z_i − z_j)² into a permuted C. */
  readonly scale: number;
}

/**
 * Geary's C of the centred values with its analytical inference (see
 * {@link gearyC}); shared by {@link gearyC} and `globalStatistics`.
 *
 * @param z centred values, aligned with `weights.ids`, n ≥ 4.
 * @param sumSquares Σ z².
 * @param sums S0, S1, S2 of `weights`.
 * @throws Error when S0 = 0.
 * Cost: O(n + L).
 * @example
 *   observedGeary(z, sumSquares, w, weightsSums(w)).C;
 */
export function observedGeary(z: Float64Array, sumSquares: number, weights: SpatialWeights, sums: WeightsSums): ObservedGeary {
  const n = z.length;
  const { S0, S1, S2 } = sums;
  if (!(S0 > 0)) throw new Error("Geary's C needs at least one link between regions (S0 = 0).");
  let squaredDifferences = 0;
  let fourth = 0;
  for (let i = 0; i < n; i++) {
    fourth += z[i] ** 4;
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const d = z[i] - z[weights.neighbours[p]];
      squaredDifferences += weights.weights[p] * d * d;
    }
  }
  const scale = (n - 1) / (2 * S0 * sumSquares);
  const C = scale * squaredDifferences;
  const b2 = (n * fourth) / (sumSquares * sumSquares);
  const S0sq = S0 * S0;
  const normalityVariance = ((2 * S1 + S2) * (n - 1) - 4 * S0sq) / (2 * (n + 1) * S0sq);
  const randomisationVariance =
    ((n - 1) * S1 * (n * n - 3 * n + 3 - (n - 1) * b2) -
      0.25 * (n - 1) * S2 * (n * n + 3 * n - 6 - (n * n - n + 2) * b2) +
      S0sq * (n * n - 3 - (n - 1) * (n - 1) * b2)) /
    (n * (n - 2) * (n - 3) * S0sq);
  const inference = (variance: number): AnalyticalInference => {
    const zScore = (C - 1) / Math.sqrt(variance);
    return { variance, z: zScore, ...normalTailProbabilities(zScore) };
  };
  return { C, kurtosis: b2, normality: inference(normalityVariance), randomisation: inference(randomisationVariance), scale };
}

/**
 * Assembles a {@link GearyResult} from the observed part and the R permuted
 * numerators Σ_i Σ_j w_ij (z_i − z_j)² (scaled in place to values of C), or
 * null for no permutation test.
 *
 * Cost: O(R log R).
 */
export function gearyResult(n: number, sums: WeightsSums, observed: ObservedGeary, squaredDifferences: Float64Array | null): GearyResult {
  let permutation: PermutationSummary | null = null;
  if (squaredDifferences !== null) {
    for (let r = 0; r < squaredDifferences.length; r++) squaredDifferences[r] *= observed.scale;
    permutation = summarisePermutations(observed.C, squaredDifferences, 1);
  }
  return {
    n,
    C: observed.C,
    expectedC: 1,
    sums,
    kurtosis: observed.kurtosis,
    normality: observed.normality,
    randomisation: observed.randomisation,
    permutation,
  };
}
