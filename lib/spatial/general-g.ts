/**
 * Getis–Ord General G with analytical (randomisation) and permutation inference.
 */
import type { AnalyticalInference, PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import { weightsSums, type WeightsSums } from "./weights/summary";
import { checkedValues, requireRegions, spatialLagInto } from "./internal";
import { normalTailProbabilities } from "./distributions";
import { checkPermutationCount } from "./random";
import { globalPermutationSums, summarisePermutations } from "./permutation";

/** Result of {@link generalG}. */
export interface GeneralGResult {
  readonly n: number;
  /** G = ΣΣ_{i≠j} w_ij x_i x_j / ΣΣ_{i≠j} x_i x_j. */
  readonly G: number;
  /** E[G] = S0 / (n(n−1)). */
  readonly expectedG: number;
  readonly sums: WeightsSums;
  /** Inference under randomisation (Getis & Ord 1992). */
  readonly randomisation: AnalyticalInference;
  /** Permutation inference, or null when R = 0. */
  readonly permutation: PermutationSummary | null;
}

/**
 * Getis–Ord General G (A. Getis & J. K. Ord 1992, "The analysis of spatial
 * association by use of distance statistics", Geographical Analysis 24(3);
 * moments in the form usually used since, with m_j = Σ_i x_i^j):
 *
 *   G = Σ_i Σ_{j≠i} w_ij x_i x_j / Σ_i Σ_{j≠i} x_i x_j,   E[G] = S0 / (n(n−1)),
 *   E[G²] = (B0 m2² + B1 m4 + B2 m1² m2 + B3 m1 m3 + B4 m1⁴)
 *           / [(m1² − m2)² n(n−1)(n−2)(n−3)],   Var = E[G²] − E[G]²,
 *   B0 = (n² − 3n + 3) S1 − n S2 + 3 S0²
 *   B1 = −[(n² − n) S1 − 2n S2 + 6 S0²]
 *   B2 = −[2n S1 − (n + 3) S2 + 6 S0²]
 *   B3 = 4(n − 1) S1 − 2(n + 1) S2 + 8 S0²
 *   B4 = S1 − S2 + S0²
 *
 * G > E[G] means high values cluster ("hot spots"); read `pGreater`.
 * The statistic is defined for non-negative values; binary (or distance)
 * weights are customary, row-standardised weights make G hard to read.
 *
 * @param values one finite, non-negative number per region.
 * @throws Error for misaligned or non-finite values, a negative value, all
 *   values zero or a single non-zero value (denominator 0), n < 4, no links,
 *   or bad permutation options.
 * Cost: O(n + L log k), plus O(R·(n + L/2)) for permutations.
 * @example
 *   generalG(incomePerHead, binaryBand).randomisation.pGreater;
 */
export function generalG(values: ArrayLike<number>, weights: SpatialWeights, options: PermutationOptions = {}): GeneralGResult {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 4, "General G");
  const sums = weightsSums(weights);
  const observed = observedGeneralG(x, weights, sums);
  const permutations = checkPermutationCount(options.permutations ?? 0);
  let draws: Float64Array | null = null;
  if (permutations > 0) {
    if (!options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
    // x has no diagonal weights (checked), so the cross-products are Σ_{i≠j} w_ij x_i x_j.
    draws = globalPermutationSums(x, weights, permutations, options.random).crossProducts;
  }
  return generalGResult(n, sums, observed, draws);
}

/** The observed part of {@link generalG}: everything but the permutation test. */
export interface ObservedGeneralG {
  readonly G: number;
  readonly expectedG: number;
  readonly randomisation: AnalyticalInference;
  /** Σ_{i≠j} x_i x_j: divides a permuted Σ_{i≠j} w_ij x_i x_j into a permuted G. */
  readonly denominator: number;
}

/**
 * General G of the values with its analytical inference (see
 * {@link generalG}); shared by {@link generalG} and `globalStatistics`.
 *
 * @param x values, aligned with `weights.ids`, n ≥ 4.
 * @param sums S0, S1, S2 of `weights`.
 * @throws Error for a negative value, fewer than two non-zero values, S0 = 0
 *   or a self-link in the weights.
 * Cost: O(n + L).
 * @example
 *   observedGeneralG(x, w, weightsSums(w)).G;
 */
export function observedGeneralG(x: Float64Array, weights: SpatialWeights, sums: WeightsSums): ObservedGeneralG {
  const n = x.length;
  let m1 = 0;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i];
    if (v < 0) throw new Error(`General G needs non-negative values; region "${weights.ids[i]}" has ${v}.`);
    m1 += v;
    m2 += v * v;
    m3 += v * v * v;
    m4 += v * v * v * v;
  }
  const denominator = m1 * m1 - m2; // ΣΣ_{i≠j} x_i x_j
  if (!(denominator > 1e-12 * m1 * m1)) {
    throw new Error("General G is undefined: fewer than two regions have a non-zero value.");
  }
  const { S0, S1, S2 } = sums;
  if (!(S0 > 0)) throw new Error("General G needs at least one link between regions (S0 = 0).");
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      if (weights.neighbours[p] === i) throw new Error("General G excludes i = j: the weights must not contain self-links.");
    }
  }
  const lag = spatialLagInto(weights, x, new Float64Array(n));
  let numerator = 0;
  for (let i = 0; i < n; i++) numerator += x[i] * lag[i];
  const G = numerator / denominator;
  const expectedG = S0 / (n * (n - 1));
  const S0sq = S0 * S0;
  const B0 = (n * n - 3 * n + 3) * S1 - n * S2 + 3 * S0sq;
  const B1 = -((n * n - n) * S1 - 2 * n * S2 + 6 * S0sq);
  const B2 = -(2 * n * S1 - (n + 3) * S2 + 6 * S0sq);
  const B3 = 4 * (n - 1) * S1 - 2 * (n + 1) * S2 + 8 * S0sq;
  const B4 = S1 - S2 + S0sq;
  const secondMoment =
    (B0 * m2 * m2 + B1 * m4 + B2 * m1 * m1 * m2 + B3 * m1 * m3 + B4 * m1 ** 4) /
    (denominator * denominator * n * (n - 1) * (n - 2) * (n - 3));
  const variance = secondMoment - expectedG * expectedG;
  const zScore = (G - expectedG) / Math.sqrt(variance);
  return { G, expectedG, randomisation: { variance, z: zScore, ...normalTailProbabilities(zScore) }, denominator };
}

/**
 * Assembles a {@link GeneralGResult} from the observed part and the R
 * permuted numerators Σ_{i≠j} w_ij x_i x_j (divided in place into values of
 * G), or null for no permutation test.
 *
 * Cost: O(R log R).
 */
export function generalGResult(n: number, sums: WeightsSums, observed: ObservedGeneralG, crossProducts: Float64Array | null): GeneralGResult {
  let permutation: PermutationSummary | null = null;
  if (crossProducts !== null) {
    for (let r = 0; r < crossProducts.length; r++) crossProducts[r] /= observed.denominator;
    permutation = summarisePermutations(observed.G, crossProducts, observed.expectedG);
  }
  return { n, G: observed.G, expectedG: observed.expectedG, sums, randomisation: observed.randomisation, permutation };
}
