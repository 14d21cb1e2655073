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
  /** Sample sd (divisor R − 1) of the permuted lags. */
  readonly sd: Float64Array;
}

/**
 * Runs R conditional permutations and counts, for every region, how often the
 * permuted spatial lag of `values` is at least / at most the observed one.
 * Weights must not contain self-links (a fixed self term is added by the caller).
 *
 * Cost: O(R · (k_max + n + L)) time; O(n) memory; no allocation inside the loop.
 */
export function conditionalLagPermutations(
  values: Float64Array,
  weights: SpatialWeights,
  observedLag: Float64Array,
  permutations: number,
  random: RandomSource,
): ConditionalLagCounts {
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
      if (k === 0) continue;
      const observed = observedLag[i];
      const tol = tolerance[i];
      const scale = rowWeight[i];
      let greater = 0;
      let less = 0;
      let differenceSum = 0;
      let differenceSquares = 0;
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
      }
      atLeast[i] += greater;
      atMost[i] += less;
      sum[i] += differenceSum;
      sumSquares[i] += differenceSquares;
    }
  }
  const mean = new Float64Array(n);
  const sd = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const meanDifference = sum[i] / permutations;
    mean[i] = observedLag[i] + meanDifference;
    const variance = (sumSquares[i] - permutations * meanDifference * meanDifference) / (permutations - 1);
    sd[i] = Math.sqrt(Math.max(0, variance));
  }
  return { atLeast, atMost, mean, sd };
}
