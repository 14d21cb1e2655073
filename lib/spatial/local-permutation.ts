/**
 * Conditional permutation engine for local statistics (internal).
 *
 * Conditional randomisation (Anselin 1995, §4): the value of region i stays
 * in place and its k_i neighbour slots receive k_i values drawn without
 * replacement from the other n − 1 regions.
 *
 * Implementation choice — shared draws: for each permutation r we draw ONE
 * ordered sample of k_max distinct indices d_0 … d_{k_max−1} from
 * {0, …, n−2} (a partial Fisher–Yates shuffle of a persistent pool), and every
 * region i uses the first k_i of them, mapped to {0, …, n−1} \ {i} by
 * d → d + [d ≥ i]. That map is a bijection, so for each region the k_i values
 * are an exact uniform draw without replacement from the other n − 1 values:
 * every region's permutation distribution and pseudo p-value are valid.
 * The consequence: the permutation distributions of different regions are
 * not independent of one another (they share draws), so the Monte Carlo
 * errors of the pseudo p-values are correlated across regions. This does not
 * bias any single p-value; it matters only if one reads the joint pattern of
 * Monte Carlo noise across a map. It cuts the random draws from
 * R · Σ k_i to R · k_max, which is what makes 999 permutations of a
 * 10,000-region map fast. (Published implementations in R and Python use the
 * same device.)
 *
 * The engine works on the spatial lag L_i = Σ_m w_{i,m} v_{draw_m}; local
 * statistics are monotone in L_i for fixed i, so counting L_perm ≥ L_obs gives
 * the upper tail of the statistic (the caller flips tails when the factor is
 * negative). Ties within a relative 1e-10 count as extreme.
 */
import type { RandomSource, SpatialWeights } from "./types";

/** Per-region results of the engine. */
export interface ConditionalLagCounts {
  /** Number of permuted lags ≥ the observed lag. */
  readonly atLeast: Int32Array;
  /** Number of permuted lags ≤ the observed lag. */
  readonly atMost: Int32Array;
  /** Mean of the permuted lags. */
  readonly mean: Float64Array;
  /** Sample sd (divisor draws − 1) of the permuted lags. */
  readonly sd: Float64Array;
  /**
   * Permutations each region used: R, or fewer when sequential stopping
   * (`stopAfterExtremes`) ended its sampling early.
   */
  readonly draws: Int32Array;
}

/**
 * The sequential-stopping option of a local permutation test, checked: null
 * (fixed count) or a whole number of extremes from 1 to the permutations.
 */
export function sequentialExtremesOf(requested: number | null | undefined, permutations: number): number | null {
  const sequentialExtremes = requested ?? null;
  if (sequentialExtremes !== null && (!Number.isInteger(sequentialExtremes) || sequentialExtremes < 1 || sequentialExtremes > permutations)) {
    throw new Error(`Sequential stopping needs a whole number of extremes from 1 to the permutations (${permutations}); got ${String(sequentialExtremes)}.`);
  }
  return sequentialExtremes;
}

/**
 * Runs R conditional permutations and counts, for every region, how often the
 * permuted spatial lag of `values` is at least / at most the observed one.
 * Weights must not contain self-links (a fixed self term is added by the caller).
 *
 * Sequential stopping (Besag & Clifford 1991, "Sequential Monte Carlo
 * p-values", Biometrika 78(2), 301–304): with `stopAfterExtremes` = h, a
 * region stops sampling as soon as both tails hold h permuted lags as extreme
 * as the observed one, i.e. once its folded p is clearly far from any
 * significance level; a region that never gets there uses all R draws. The
 * draws themselves are the same as without stopping (the shared stream is
 * drawn in full), so a region that is not stopped gets exactly the
 * fixed-count result, bit for bit.
 *
 * Cost: O(R · (k_max + n + L)) time; O(n) memory; no allocation inside the loop.
 * With sequential stopping the per-region part shrinks to O(Σ_i draws_i · k_i).
 */
export function conditionalLagPermutations(
  values: Float64Array,
  weights: SpatialWeights,
  observedLag: Float64Array,
  permutations: number,
  random: RandomSource,
  stopAfterExtremes: number | null = null,
): ConditionalLagCounts {
  if (stopAfterExtremes !== null && !(Number.isInteger(stopAfterExtremes) && stopAfterExtremes >= 1)) {
    throw new Error(`Sequential stopping needs a whole number of extremes ≥ 1; got ${String(stopAfterExtremes)}.`);
  }
  const n = values.length;
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  let kMax = 0;
  let maxAbs = 0;
  for (let i = 0; i < n; i++) {
    const k = offsets[i + 1] - offsets[i];
    if (k > kMax) kMax = k;
    if (Math.abs(values[i]) > maxAbs) maxAbs = Math.abs(values[i]);
    for (let p = offsets[i]; p < offsets[i + 1]; p++) {
      if (neighbours[p] === i) throw new Error("Conditional permutation: weights must not contain self-links.");
    }
  }
  if (kMax > n - 1) throw new Error("Conditional permutation: a region has more neighbours than other regions exist.");
  const tolerance = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let absoluteRow = 0;
    for (let p = offsets[i]; p < offsets[i + 1]; p++) absoluteRow += Math.abs(w[p]);
    tolerance[i] = 1e-10 * Math.max(absoluteRow * maxAbs, Math.abs(observedLag[i]), 1e-300);
  }
  const atLeast = new Int32Array(n);
  const atMost = new Int32Array(n);
  // Accumulate deviations from the observed lag (keeps the variance accurate).
  const sum = new Float64Array(n);
  const sumSquares = new Float64Array(n);
  const draws = new Int32Array(n);
  // A region's draw count stays 0 while it is sampling; stopped marks it done.
  const stopped = new Uint8Array(n);
  const pool = new Int32Array(Math.max(n - 1, 0));
  for (let j = 0; j < n - 1; j++) pool[j] = j;
  const poolSize = n - 1;
  // Rows whose weights are all equal (binary, or row-standardised binary) are
  // summed first and scaled once: lag = w_i · Σ v.
  const rowWeight = new Float64Array(n);
  let allUniform = true;
  for (let i = 0; i < n; i++) {
    const start = offsets[i];
    const end = offsets[i + 1];
    rowWeight[i] = end > start ? w[start] : 0;
    for (let p = start + 1; p < end; p++) if (w[p] !== w[start]) allUniform = false;
  }
  // Permutations are processed in blocks: first the block's samples are drawn
  // (in permutation order, so the random stream is the same as drawing one
  // permutation at a time), then each region runs through the whole block
  // with its counters in registers. The block of draws stays in the L1 cache.
  const blockSize = Math.max(1, Math.min(permutations, Math.floor(16384 / Math.max(kMax, 1))));
  const block = new Int32Array(blockSize * Math.max(kMax, 1));
  for (let first = 0; first < permutations; first += blockSize) {
    const count = Math.min(blockSize, permutations - first);
    for (let b = 0; b < count; b++) {
      // Partial Fisher–Yates: the first kMax pool slots become a uniform ordered sample.
      const base = b * kMax;
      for (let m = 0; m < kMax; m++) {
        const pick = m + random.nextInt(poolSize - m);
        const t = pool[m];
        pool[m] = pool[pick];
        pool[pick] = t;
        block[base + m] = pool[m];
      }
    }
    for (let i = 0; i < n; i++) {
      const start = offsets[i];
      const k = offsets[i + 1] - start;
      if (k === 0 || stopped[i] === 1) continue;
      const observed = observedLag[i];
      const tol = tolerance[i];
      const scale = rowWeight[i];
      let greater = 0;
      let less = 0;
      let differenceSum = 0;
      let differenceSquares = 0;
      // Without stopping the loop runs the whole block; with it, it ends at the
      // draw where both tails reach h (checked per draw, a branch only this path pays).
      const stopAt = stopAfterExtremes;
      let used = count;
      for (let b = 0, base = 0; b < count; b++, base += kMax) {
        let lag = 0;
        if (allUniform) {
          for (let m = 0; m < k; m++) {
            const d = block[base + m];
            // d ≥ i ⇒ d + 1 (skip region i itself); (i − d − 1) >>> 31 is 1 exactly when d ≥ i.
            lag += values[d + ((i - d - 1) >>> 31)];
          }
          lag *= scale;
        } else {
          for (let m = 0; m < k; m++) {
            const d = block[base + m];
            lag += w[start + m] * values[d + ((i - d - 1) >>> 31)];
          }
        }
        const difference = lag - observed;
        greater += difference >= -tol ? 1 : 0;
        less += difference <= tol ? 1 : 0;
        differenceSum += difference;
        differenceSquares += difference * difference;
        if (stopAt !== null && atLeast[i] + greater >= stopAt && atMost[i] + less >= stopAt) {
          used = b + 1;
          stopped[i] = 1;
          break;
        }
      }
      atLeast[i] += greater;
      atMost[i] += less;
      sum[i] += differenceSum;
      sumSquares[i] += differenceSquares;
      draws[i] += used;
    }
  }
  const mean = new Float64Array(n);
  const sd = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // Regions without neighbours never sample; report R so callers need no special case.
    if (offsets[i + 1] === offsets[i]) draws[i] = permutations;
    const used = draws[i];
    const meanDifference = sum[i] / used;
    mean[i] = observedLag[i] + meanDifference;
    const variance = used > 1 ? (sumSquares[i] - used * meanDifference * meanDifference) / (used - 1) : 0;
    sd[i] = Math.sqrt(Math.max(0, variance));
  }
  return { atLeast, atMost, mean, sd, draws };
}
