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
 * Rejection thresholds of Lemire's method on 16-bit draws for every bound
 * b = 1 … min(n, 2^16): t[b] = (2^16 − b) mod b. Computed once per test.
 */
export function shuffleThresholds(n: number): Int32Array {
  const size = Math.min(n, 65536);
  const thresholds = new Int32Array(size + 1);
  for (let b = 1; b <= size; b++) thresholds[b] = (65536 - b) % b;
  return thresholds;
}

/**
 * One Fisher–Yates shuffle of `values` in place (Durstenfeld 1964, CACM 7(7),
 * algorithm 235): for i = n−1 … 1, swap values[i] with values[j], j uniform
 * in [0, i]. Bounds up to 2^16 take the two 16-bit halves of one 32-bit draw
 * in turn, mapped by Lemire's multiply-and-reject (exactly uniform), which
 * halves the generator calls; larger bounds use `nextInt`. When `swaps` is
 * given, j is also recorded there (to apply the same shuffle to another
 * array). The random numbers consumed depend only on n and the generator
 * state, so the same seed gives the same sequence of shuffles for any data of
 * the same size.
 *
 * Cost: O(n).
 */
export function shuffleWith(
  values: Float64Array,
  random: RandomSource,
  thresholds: Int32Array,
  swaps: Int32Array | null = null,
): void {
  let buffer = 0;
  let haveHalf = false;
  for (let i = values.length - 1; i > 0; i--) {
    const bound = i + 1;
    let j: number;
    if (bound > 65536) {
      j = random.nextInt(bound);
    } else {
      const threshold = thresholds[bound];
      for (;;) {
        let x16: number;
        if (haveHalf) {
          x16 = buffer & 0xffff;
          haveHalf = false;
        } else {
          buffer = random.nextUint32();
          x16 = buffer >>> 16;
          haveHalf = true;
        }
        const product = Math.imul(x16, bound); // x16·bound < 2^32: exact in the 32 bits
        if ((product & 0xffff) >= threshold) {
          j = product >>> 16;
          break;
        }
      }
    }
    const t = values[i];
    values[i] = values[j];
    values[j] = t;
    if (swaps !== null) swaps[i] = j;
  }
}

/**
 * Fisher–Yates shuffle of `values` in place, drawing from `random`
 * (uniform over all n! orders; see {@link shuffleWith}).
 *
 * Cost: O(n).
 * @example
 *   shuffleInPlace(copy, createRandomSource(3));
 */
export function shuffleInPlace(values: Float64Array, random: RandomSource): void {
  shuffleWith(values, random, shuffleThresholds(values.length));
}

function applySwaps(values: Float64Array, swaps: Int32Array): void {
  for (let i = values.length - 1; i > 0; i--) {
    const j = swaps[i];
    const t = values[i];
    values[i] = values[j];
    values[j] = t;
  }
}

/**
 * Unordered pairs of the weights in upper-triangular CSR form: for each i,
 * the j > i linked either way, with c_ij = w_ij + w_ji, and the diagonal
 * w_ii separately. Then Σ_i Σ_j w_ij a_i b_j = Σ_i w_ii a_i b_i +
 * Σ_{i<j} (w_ij a_i b_j + w_ji a_j b_i), which for a = b is
 * Σ_i w_ii a_i² + Σ_{i<j} c_ij a_i a_j — half the links of the full matrix.
 */
interface PairWeights {
  readonly offsets: Int32Array;
  readonly neighbours: Int32Array;
  readonly weights: Float64Array;
  readonly diagonal: Float64Array;
}

function pairWeights(weights: SpatialWeights): PairWeights {
  const n = weights.ids.length;
  const rows: Map<number, number>[] = Array.from({ length: n }, () => new Map<number, number>());
  const diagonal = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      const w = weights.weights[p];
      if (j === i) diagonal[i] += w;
      else {
        const low = i < j ? i : j;
        const high = i < j ? j : i;
        rows[low].set(high, (rows[low].get(high) ?? 0) + w);
      }
    }
  }
  const offsets = new Int32Array(n + 1);
  let total = 0;
  for (let i = 0; i < n; i++) {
    total += rows[i].size;
    offsets[i + 1] = total;
  }
  const neighbours = new Int32Array(total);
  const values = new Float64Array(total);
  for (let i = 0; i < n; i++) {
    const sorted = [...rows[i].entries()].sort((a, b) => a[0] - b[0]);
    sorted.forEach(([j, w], q) => {
      neighbours[offsets[i] + q] = j;
      values[offsets[i] + q] = w;
    });
  }
  return { offsets, neighbours, weights: values, diagonal };
}

/**
 * R permuted values of the cross-product Σ_i Σ_j w_ij v_i v_j (the numerator
 * of Moran's I when v = z, and of General G when v = x), evaluated over
 * unordered pairs (half the links).
 *
 * Cost: O(R·(n + L/2)), no allocation inside the loop.
 */
export function crossProductPermutations(
  values: Float64Array,
  weights: SpatialWeights,
  permutations: number,
  random: RandomSource,
): Float64Array {
  const n = values.length;
  const pairs = pairWeights(weights);
  const { offsets, neighbours, diagonal } = pairs;
  const w = pairs.weights;
  let hasDiagonal = false;
  for (let i = 0; i < n; i++) if (diagonal[i] !== 0) hasDiagonal = true;
  const shuffled = values.slice();
  const thresholds = shuffleThresholds(n);
  const out = new Float64Array(permutations);
  for (let r = 0; r < permutations; r++) {
    shuffleWith(shuffled, random, thresholds);
    let total = 0;
    let start = 0;
    for (let i = 0; i < n; i++) {
      const end = offsets[i + 1];
      let lag = 0;
      for (let p = start; p < end; p++) lag += w[p] * shuffled[neighbours[p]];
      total += shuffled[i] * lag;
      start = end;
    }
    if (hasDiagonal) for (let i = 0; i < n; i++) total += diagonal[i] * shuffled[i] * shuffled[i];
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
  const swaps = new Int32Array(n);
  const thresholds = shuffleThresholds(n);
  const out = new Float64Array(permutations);
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  for (let r = 0; r < permutations; r++) {
    shuffleWith(xs, random, thresholds, swaps);
    applySwaps(ys, swaps);
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
 * R permuted values of Σ_i Σ_j w_ij (v_i − v_j)² (the numerator of Geary's
 * C), over unordered pairs: Σ_{i<j} c_ij (v_i − v_j)².
 *
 * Cost: O(R·(n + L/2)).
 */
export function squaredDifferencePermutations(
  values: Float64Array,
  weights: SpatialWeights,
  permutations: number,
  random: RandomSource,
): Float64Array {
  const n = values.length;
  const pairs = pairWeights(weights);
  const { offsets, neighbours } = pairs;
  const w = pairs.weights;
  const shuffled = values.slice();
  const thresholds = shuffleThresholds(n);
  const out = new Float64Array(permutations);
  for (let r = 0; r < permutations; r++) {
    shuffleWith(shuffled, random, thresholds);
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
