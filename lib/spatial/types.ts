/**
 * Shared types of the Tessera statistics engine (`lib/spatial`).
 *
 * Everything in `lib/spatial` is pure: no file system, no network, no database,
 * no framework. Inputs are never mutated; results are fresh plain objects and
 * typed arrays.
 */

/**
 * How the weights of a {@link SpatialWeights} object are scaled.
 *
 * - `"binary"` (often written B): every link has weight 1.
 * - `"row-standardised"` (often written W): every row with at least one
 *   neighbour sums to 1, w_ij = b_ij / Σ_j b_ij; rows of regions without
 *   neighbours stay empty (their spatial lag is zero).
 * - `"none"`: general, untransformed weights (inverse distance, an uploaded
 *   edge list with its own weights).
 */
export type WeightsTransform = "binary" | "row-standardised" | "none";

/**
 * Spatial weights in compressed sparse row (CSR) form.
 *
 * Region i (0-based, in the order of `ids`) has the neighbours
 * `neighbours[offsets[i] .. offsets[i+1]-1]` with the weights at the same
 * positions of `weights`. Within a row, neighbours are sorted ascending and
 * unique; there is no self-link unless a function says otherwise (Gi* adds the
 * diagonal itself). The arrays are treated as read-only by every function.
 *
 * Shapes: `ids.length = n`, `offsets.length = n + 1`, `offsets[0] = 0`,
 * `offsets[n] = neighbours.length = weights.length` (the number of links).
 */
export interface SpatialWeights {
  /** Region identifiers, unique, in row order. */
  readonly ids: readonly string[];
  /** Row starts, length n + 1, non-decreasing, offsets[0] = 0. */
  readonly offsets: Int32Array;
  /** Column (neighbour) indices, 0 ≤ j < n, sorted ascending within a row. */
  readonly neighbours: Int32Array;
  /** Link weights, finite and > 0, aligned with `neighbours`. */
  readonly weights: Float64Array;
  /**
   * How the links were defined, in the CLI's notation: `"queen"`, `"rook"`,
   * `"knn:6"`, `"band:25"`, `"idw:25:2"`, `"edge-list"`, or a caller's label.
   */
  readonly rule: string;
  /** How the link weights are scaled. */
  readonly transform: WeightsTransform;
}

/**
 * Whether coordinates are longitude/latitude in degrees (`"geographic"`) or
 * projected planar coordinates (`"planar"`, assumed to be in kilometres when a
 * distance in km is given).
 */
export type CoordinateSystem = "geographic" | "planar";

/**
 * One representative point (usually the centroid) per region.
 *
 * `x` is longitude (degrees) or easting; `y` is latitude (degrees) or
 * northing. `ids.length = x.length = y.length = n`.
 */
export interface RegionPoints {
  readonly ids: readonly string[];
  readonly x: Float64Array;
  readonly y: Float64Array;
  /** How the coordinates are to be read; see `detectCoordinateSystem`. */
  readonly coordinates: CoordinateSystem;
}

/**
 * What to do with regions that have no neighbours ("islands"), chosen per
 * call and always reported back in the result.
 *
 * - `"exclude"`: drop them from the analysis (n is reduced).
 * - `"keep"`: keep them with a spatial lag of zero (they still count in n,
 *   in the mean and in Σz²).
 * - `"attach"`: link each to its nearest region by centroid distance
 *   (a symmetric link i↔j of weight 1 before any transform).
 */
export type IslandPolicy = "exclude" | "keep" | "attach";

/**
 * A seeded source of uniformly distributed random numbers. Every random
 * operation of the engine draws from one of these, never from `Math.random`,
 * so the same seed gives the same result on every machine.
 */
export interface RandomSource {
  /** A uniform integer in [0, 2^32). */
  nextUint32(): number;
  /** A uniform integer in [0, bound) without modulo bias; 1 ≤ bound ≤ 2^32. */
  nextInt(bound: number): number;
  /** A uniform double in [0, 1) with 53 random bits. */
  nextFloat(): number;
  /**
   * Shuffles `values` in place into a uniformly random order (Fisher–Yates);
   * when `swaps` (length ≥ values.length) is given, the partner j of every
   * position i ≥ 1 is recorded in swaps[i], so that the same shuffle can be
   * applied to another array. The random numbers consumed depend only on
   * values.length and the generator's state.
   */
  shuffle(values: Float64Array, swaps?: Int32Array | null): void;
}

/** Tail probabilities of a test statistic under a reference distribution. */
export interface TailProbabilities {
  /** P(statistic ≥ observed): evidence of positive autocorrelation for I. */
  readonly pGreater: number;
  /** P(statistic ≤ observed). */
  readonly pLess: number;
  /** Two-sided: min(1, 2·min(pGreater, pLess)). */
  readonly pTwoSided: number;
}

/** Analytical inference for one statistic under one null hypothesis. */
export interface AnalyticalInference extends TailProbabilities {
  /** Variance of the statistic under this null. */
  readonly variance: number;
  /** (statistic − expected) / sqrt(variance). */
  readonly z: number;
}

/**
 * Summary of a permutation (randomisation) distribution.
 *
 * pGreater = (M≥ + 1)/(R + 1), pLess = (M≤ + 1)/(R + 1), where M≥ (M≤) is the
 * number of the R permuted statistics at least (at most) as large as the
 * observed one; pTwoSided = min(1, 2·min(pGreater, pLess)). Hence every p is
 * in [1/(R+1), 1].
 */
export interface PermutationSummary extends TailProbabilities {
  /** R, the number of random relabellings. */
  readonly permutations: number;
  /** Mean of the R permuted statistics. */
  readonly mean: number;
  /** Sample standard deviation (divisor R − 1) of the permuted statistics. */
  readonly sd: number;
  /** (observed − mean)/sd; NaN when sd = 0. */
  readonly z: number;
  /** Number of permuted statistics ≥ observed (ties count as extreme). */
  readonly countAtLeast: number;
  /** Number of permuted statistics ≤ observed (ties count as extreme). */
  readonly countAtMost: number;
  /** The 2.5 % and 97.5 % quantiles of the permutation distribution. */
  readonly band: readonly [number, number];
}

/** Options of every function that runs a permutation test. */
export interface PermutationOptions {
  /** R, an integer from 99 to 99,999 (999 is the customary default); 0 skips the test. */
  readonly permutations?: number;
  /** The seeded generator to draw from; required when permutations > 0. */
  readonly random?: RandomSource;
}
