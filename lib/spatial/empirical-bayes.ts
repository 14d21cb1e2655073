/**
 * Empirical-Bayes standardisation of rates with small bases (Assunção & Reis 1999).
 */

/** Result of {@link empiricalBayesStandardise}. */
export interface EmpiricalBayesResult {
  /** Raw rates r_i = events_i / population_i. */
  readonly rates: Float64Array;
  /** Global rate b = Σ events / Σ population. */
  readonly globalRate: number;
  /** Method-of-moments between-region variance a = s² − b / (Σ population / n); may be negative. */
  readonly betweenVariance: number;
  /** Variance v_i = a + b / population_i, replaced by b / population_i where it is not positive. */
  readonly variances: Float64Array;
  /** Standardised values z_i = (r_i − b) / sqrt(v_i), to be analysed with Moran's I. */
  readonly standardised: Float64Array;
}

/**
 * Empirical-Bayes standardisation of rates (R. M. Assunção & E. A. Reis 1999,
 * "A new proposal to adjust Moran's I for population density", Statistics in
 * Medicine 18). Rates on small populations are noisy; each rate is centred on
 * the global rate and scaled by its own expected standard deviation:
 *
 *   r_i = O_i / P_i,   b = Σ O / Σ P,
 *   s² = Σ P_i (r_i − b)² / Σ P,   a = s² − b / P̄,   P̄ = Σ P / n,
 *   v_i = a + b / P_i   (if v_i ≤ 0, v_i = b / P_i),
 *   z_i = (r_i − b) / sqrt(v_i).
 *
 * Moran's I of z (globalMoran on `standardised`) is the EB-adjusted index;
 * permutation inference is the recommended test for it.
 *
 * @param events O_i ≥ 0, one per region (counts, need not be integers).
 * @param populations P_i > 0, aligned with `events`.
 * @throws Error for different lengths, n < 2, a negative or non-finite event
 *   count, a non-positive or non-finite population, or no events at all
 *   (b = 0 makes every variance 0).
 * Cost: O(n).
 * @example
 *   empiricalBayesStandardise([3, 0, 12], [1200, 450, 9800]).standardised;
 */
export function empiricalBayesStandardise(events: ArrayLike<number>, populations: ArrayLike<number>): EmpiricalBayesResult {
  const n = events.length;
  if (populations.length !== n) throw new Error(`Empirical Bayes: ${n} event counts but ${populations.length} populations.`);
  if (n < 2) throw new Error(`Empirical Bayes needs at least 2 regions; got ${n}.`);
  let totalEvents = 0;
  let totalPopulation = 0;
  for (let i = 0; i < n; i++) {
    const o = events[i];
    const p = populations[i];
    if (!Number.isFinite(o) || o < 0) throw new Error(`Empirical Bayes: event count ${i} is ${String(o)}; counts must be finite and ≥ 0.`);
    if (!Number.isFinite(p) || p <= 0) throw new Error(`Empirical Bayes: population ${i} is ${String(p)}; populations must be finite and > 0.`);
    totalEvents += o;
    totalPopulation += p;
  }
  if (totalEvents === 0) throw new Error("Empirical Bayes: there are no events at all, so every rate is 0 and nothing can be standardised.");
  const b = totalEvents / totalPopulation;
  const rates = new Float64Array(n);
  let weightedSquares = 0;
  for (let i = 0; i < n; i++) {
    rates[i] = events[i] / populations[i];
    weightedSquares += populations[i] * (rates[i] - b) ** 2;
  }
  const s2 = weightedSquares / totalPopulation;
  const a = s2 - b / (totalPopulation / n);
  const variances = new Float64Array(n);
  const standardised = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let v = a + b / populations[i];
    if (!(v > 0)) v = b / populations[i];
    variances[i] = v;
    standardised[i] = (rates[i] - b) / Math.sqrt(v);
  }
  return { rates, globalRate: b, betweenVariance: a, variances, standardised };
}
