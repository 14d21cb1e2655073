/**
 * Bivariate Moran's I: a variable x against the spatial lag of another, y.
 */
import type { PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import { weightsSums } from "./weights/summary";
import { centred, checkedValues, requireRegions, spatialLagInto } from "./internal";
import { checkPermutationCount } from "./random";
import { bivariateCrossProductPermutations, summarisePermutations } from "./permutation";

/** Result of {@link bivariateMoran}. */
export interface BivariateMoranResult {
  readonly n: number;
  /** I_xy = (n/S0) Σ_i z_x,i Σ_j w_ij z_y,j / sqrt(Σ z_x² · Σ z_y²). */
  readonly I: number;
  /** E[I_xy] = −r_xy/(n−1) under joint relabelling of the pairs. */
  readonly expectedI: number;
  /** Pearson correlation r_xy of x and y in the same region (kept by the joint relabelling). */
  readonly inSituCorrelation: number;
  /** Permutation inference (joint relabelling), or null when R = 0. */
  readonly permutation: PermutationSummary | null;
}

/**
 * Bivariate Moran's I of x against the spatial lag of y (D. Wartenberg 1985,
 * "Multivariate spatial correlation", Geographical Analysis 17(4)):
 *
 *   I_xy = (n / S0) · Σ_i z_x,i (Σ_j w_ij z_y,j) / sqrt(Σ_i z_x,i² · Σ_i z_y,i²),
 *
 * with z_x = x − x̄, z_y = y − ȳ. For x = y it is Moran's I; with
 * row-standardised weights it is the slope-like association of x with the
 * average y of the neighbours. A typical use: y_t against the lag of y_{t−1}
 * (pass x = y_t, y = y_{t−1}).
 *
 * Inference is by permutation only: the pairs (x_i, y_i) are relabelled
 * jointly over the regions, so the correlation of x and y within a region is
 * kept and the test addresses only the spatial arrangement. Under that null
 * E[I_xy] = −r_xy/(n−1), with r_xy the in-situ (same-region) correlation:
 * E[Σ_{i≠j} w_ij z_x,π(i) z_y,π(j)] = S0 · Σ_{a≠b} z_x,a z_y,b / (n(n−1))
 * = −S0 Σ_a z_x,a z_y,a / (n(n−1)).
 *
 * @param x, y one finite number per region each, aligned with `weights.ids`.
 * @throws Error for misaligned or non-finite values, a constant x or y, n < 4,
 *   no links, bad permutation options.
 * Cost: O(n + L), plus O(R·(n + L)) for permutations.
 * @example
 *   bivariateMoran(unemployment2024, unemployment2023, rowStandardised).I;
 */
export function bivariateMoran(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  weights: SpatialWeights,
  options: PermutationOptions = {},
): BivariateMoranResult {
  const xs = checkedValues(x, weights, "x values");
  const ys = checkedValues(y, weights, "y values");
  const n = xs.length;
  requireRegions(n, 4, "Bivariate Moran's I");
  const cx = centred(xs, weights, "x variable");
  const cy = centred(ys, weights, "y variable");
  const { S0 } = weightsSums(weights);
  if (!(S0 > 0)) throw new Error("Bivariate Moran's I needs at least one link between regions (S0 = 0).");
  const lag = spatialLagInto(weights, cy.z, new Float64Array(n));
  let cross = 0;
  let inSitu = 0;
  for (let i = 0; i < n; i++) {
    cross += cx.z[i] * lag[i];
    inSitu += cx.z[i] * cy.z[i];
  }
  const norm = Math.sqrt(cx.sumSquares * cy.sumSquares);
  const scale = n / (S0 * norm);
  const I = scale * cross;
  const permutations = checkPermutationCount(options.permutations ?? 0);
  let permutation: PermutationSummary | null = null;
  if (permutations > 0) {
    if (!options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
    const draws = bivariateCrossProductPermutations(cx.z, cy.z, weights, permutations, options.random);
    for (let r = 0; r < permutations; r++) draws[r] *= scale;
    permutation = summarisePermutations(I, draws, 1);
  }
  return { n, I, expectedI: -(inSitu / norm) / (n - 1), inSituCorrelation: inSitu / norm, permutation };
}
