/**
 * Permutation (randomisation) inference for global statistics.
 *
 * Convention (used everywhere in the engine): with R random relabellings of
 * the values over the regions, M≥ the number of permuted statistics at least
 * as large as the observed one and M≤ the number at most as large,
 *   pGreater = (M≥ + 1)/(R + 1),  pLess = (M≤ + 1)/(R + 1),
 *   pTwoSided = min(1, 2·min(pGreater, pLess)),
 * counting the observed arrangement as one of the possible arrangements
 * (A. C. A. Hope 1968, J. R. Statist. Soc. B 30; Davison & Hinkley 1997,
 * "Bootstrap Methods and their Application", §4.3). Hence p ≥ 1/(R+1).
 * Ties within a relative 1e-10 of the observed value count as extreme
 * (conservative).
 *
 * The kernels below shuffle a private copy of the values in place with
 * Fisher–Yates (one `nextInt` per region per permutation) and then evaluate
 * the statistic's numerator over the CSR links; nothing is allocated inside
 * the loop. Successive shuffles compose, so the r-th arrangement depends only
 * on the seed, n and r — the same seed gives the same arrangements for every
 * variable of the same n (common random numbers).
 */
import type { PermutationSummary, RandomSource, SpatialWeights } from "./types";
import { tieTolerance } from "./internal";

/**
 * Summarises a permutation distribution against an observed statistic: mean,
 * sample sd, z, pGreater, pLess, pTwoSided (see the module comment), the
 * counts, and the 2.5–97.5 % band.
 *
 * @param observed the statistic on the real arrangement.
 * @param distribution the R permuted statistics (not mutated).
 * @param scale optional magnitude used for the tie tolerance (default: |observed|).
 * @throws Error when the distribution is empty.
 * Cost: O(R log R) (the band needs a sort of a copy).
 * @example
 *   summarisePermutations(0.4, draws).pGreater; // (count(draws ≥ 0.4) + 1) / (R + 1)
 */
export function summarisePermutations(observed: number, distribution: ArrayLike<number>, scale = 0): PermutationSummary {
  const R = distribution.length;
  if (R === 0) throw new Error("A permutation summary needs at least one permuted statistic.");
  const tolerance = tieTolerance(observed, scale);
  let atLeast = 0;
  let atMost = 0;
  let sum = 0;
  for (let r = 0; r < R; r++) {
    const s = distribution[r];
    if (s >= observed - tolerance) atLeast++;
    if (s <= observed + tolerance) atMost++;
    sum += s;
  }
  const mean = sum / R;
  let squares = 0;
  for (let r = 0; r < R; r++) {
    const d = distribution[r] - mean;
    squares += d * d;
  }
  const sd = R > 1 ? Math.sqrt(squares / (R - 1)) : NaN;
  const pGreater = (atLeast + 1) / (R + 1);
  const pLess = (atMost + 1) / (R + 1);
  const sorted = Float64Array.from(distribution).sort();
  return {
    permutations: R,
    mean,
    sd,
    z: sd > 0 ? (observed - mean) / sd : NaN,
    pGreater,
    pLess,
    pTwoSided: Math.min(1, 2 * Math.min(pGreater, pLess)),
    countAtLeast: atLeast,
    countAtMost: atMost,
    band: [quantileOfSorted(sorted, 0.025), quantileOfSorted(sorted, 0.975)],
  };
}

/** Quantile by linear interpolation between order statistics (type 7). */
function quantileOfSorted(sorted: Float64Array, probability: number): number {
  const h = (sorted.length - 1) * probability;
  const low = Math.floor(h);
  const high = Math.min(sorted.length - 1, low + 1);
  return sorted[low] + (h - low) * (sorted[high] - sorted[low]);
}

/**
 * Fisher–Yates shuffle of `values` in place, drawing from `random`.
 * Source: Durstenfeld (1964), CACM 7(7), algorithm 235.
 */
export function shuffleInPlace(values: Float64Array, random: RandomSource): void {
  for (let i = values.length - 1; i > 0; i--) {
    const j = random.nextInt(i + 1);
    const t = values[i];
    values[i] = values[j];
    values[j] = t;
  }
}

/**
 * R permuted values of the cross-product Σ_i v_i Σ_j w_ij v_j (the numerator
 * of Moran's I when v = z, and of General G when v = x).
 *
 * Cost: O(R·(n + L)), no allocation inside the loop.
 */
export function crossProductPermutations(
  values: Float64Array,
  weights: SpatialWeights,
  permutations: number,
  random: RandomSource,
): Float64Array {
  const n = values.length;
  const shuffled = values.slice();
  const out = new Float64Array(permutations);
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  for (let r = 0; r < permutations; r++) {
    // Fisher–Yates, inlined for speed.
    for (let i = n - 1; i > 0; i--) {
      const j = random.nextInt(i + 1);
      const t = shuffled[i];
      shuffled[i] = shuffled[j];
      shuffled[j] = t;
    }
    let total = 0;
    let start = offsets[0];
    for (let i = 0; i < n; i++) {
      const end = offsets[i + 1];
      let lag = 0;
      for (let p = start; p < end; p++) lag += w[p] * shuffled[neighbours[p]];
      total += shuffled[i] * lag;
      start = end;
    }
    out[r] = total;
  }
  return out;
}

/**
 * R permuted values of the bivariate cross-product Σ_i x_i Σ_j w_ij y_j, with
 * x and y relabelled jointly (each region's pair (x_i, y_i) moves together).
 *
 * Cost: O(R·(n + L)).
 */
export function bivariateCrossProductPermutations(
  x: Float64Array,
  y: Float64Array,
  weights: SpatialWeights,
  permutations: number,
  random: RandomSource,
): Float64Array {
  const n = x.length;
  const xs = x.slice();
  const ys = y.slice();
  const out = new Float64Array(permutations);
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  for (let r = 0; r < permutations; r++) {
    for (let i = n - 1; i > 0; i--) {
      const j = random.nextInt(i + 1);
      let t = xs[i];
      xs[i] = xs[j];
      xs[j] = t;
      t = ys[i];
      ys[i] = ys[j];
      ys[j] = t;
    }
    let total = 0;
    for (let i = 0; i < n; i++) {
      let lag = 0;
      for (let p = offsets[i]; p < offsets[i + 1]; p++) lag += w[p] * ys[neighbours[p]];
      total += xs[i] * lag;
    }
    out[r] = total;
  }
  return out;
}

/**
 * R permuted values of Σ_i Σ_j w_ij (v_i − v_j)² (the numerator of Geary's C).
 *
 * Cost: O(R·(n + L)).
 */
export function squaredDifferencePermutations(
  values: Float64Array,
  weights: SpatialWeights,
  permutations: number,
  random: RandomSource,
): Float64Array {
  const n = values.length;
  const shuffled = values.slice();
  const out = new Float64Array(permutations);
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  for (let r = 0; r < permutations; r++) {
    for (let i = n - 1; i > 0; i--) {
      const j = random.nextInt(i + 1);
      const t = shuffled[i];
      shuffled[i] = shuffled[j];
      shuffled[j] = t;
    }
    let total = 0;
    for (let i = 0; i < n; i++) {
      const vi = shuffled[i];
      for (let p = offsets[i]; p < offsets[i + 1]; p++) {
        const d = vi - shuffled[neighbours[p]];
        total += w[p] * d * d;
      }
    }
    out[r] = total;
  }
  return out;
}
