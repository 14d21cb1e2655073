/**
 * Rates with small bases: empirical-Bayes standardisation (Assunção & Reis
 * 1999) and its Moran's I, and global and local empirical-Bayes rates
 * (Marshall 1991).
 */
import type { PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import { globalMoran } from "./moran";

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

/** Checks events and populations as the empirical-Bayes functions need them (throws naming the position). */
function checkedCounts(events: ArrayLike<number>, populations: ArrayLike<number>, what: string, minimum: number): { totalEvents: number; totalPopulation: number } {
  const n = events.length;
  if (populations.length !== n) throw new Error(`${what}: ${n} event counts but ${populations.length} populations.`);
  if (n < minimum) throw new Error(`${what} needs at least ${minimum} regions; got ${n}.`);
  let totalEvents = 0;
  let totalPopulation = 0;
  for (let i = 0; i < n; i++) {
    const o = events[i];
    const p = populations[i];
    if (!Number.isFinite(o) || o < 0) throw new Error(`${what}: event count ${i} is ${String(o)}; counts must be finite and ≥ 0.`);
    if (!Number.isFinite(p) || p <= 0) throw new Error(`${what}: population ${i} is ${String(p)}; populations must be finite and > 0.`);
    totalEvents += o;
    totalPopulation += p;
  }
  return { totalEvents, totalPopulation };
}

/** Result of {@link globalEmpiricalBayesRates}. */
export interface GlobalEmpiricalBayesRates {
  /** Raw rates r_i = O_i / P_i. */
  readonly raw: Float64Array;
  /** Smoothed rates b + C_i (r_i − b), C_i = a / (a + b / P_i); b where a = 0. */
  readonly smoothed: Float64Array;
  /** Prior mean b = Σ O / Σ P. */
  readonly globalRate: number;
  /** Prior variance a = max(0, s² − b / P̄) (method of moments). */
  readonly priorVariance: number;
}

/**
 * Global empirical-Bayes rates (R. J. Marshall 1991, "Mapping disease and
 * mortality rates using empirical Bayes estimators", Applied Statistics 40(2),
 * pp. 283–294; method of moments for a Poisson–gamma model). Every rate is
 * shrunk towards the overall rate, the more the smaller its population:
 *
 *   r_i = O_i / P_i,   b = Σ O / Σ P,   P̄ = Σ P / n,
 *   s² = Σ P_i (r_i − b)² / Σ P,   a = max(0, s² − b / P̄),
 *   smoothed_i = b + a (r_i − b) / (a + b / P_i).
 *
 * a = 0 (the rates vary no more than Poisson noise around b) gives b for every
 * region; b = 0 (no events) gives 0 everywhere.
 *
 * @param events O_i ≥ 0, one per region.
 * @param populations P_i > 0, aligned with `events`.
 * @throws Error for different lengths, n < 2, a negative or non-finite count,
 *   a non-positive or non-finite population.
 * Cost: O(n).
 * @example
 *   globalEmpiricalBayesRates([3, 0, 12], [1200, 450, 9800]).smoothed;
 */
export function globalEmpiricalBayesRates(events: ArrayLike<number>, populations: ArrayLike<number>): GlobalEmpiricalBayesRates {
  const n = events.length;
  const { totalEvents, totalPopulation } = checkedCounts(events, populations, "Global empirical Bayes", 2);
  const b = totalEvents / totalPopulation;
  const raw = new Float64Array(n);
  let weightedSquares = 0;
  for (let i = 0; i < n; i++) {
    raw[i] = events[i] / populations[i];
    weightedSquares += populations[i] * (raw[i] - b) ** 2;
  }
  const a = Math.max(0, weightedSquares / totalPopulation - b / (totalPopulation / n));
  const smoothed = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const denominator = a + b / populations[i];
    smoothed[i] = denominator > 0 ? b + (a * (raw[i] - b)) / denominator : b;
  }
  return { raw, smoothed, globalRate: b, priorVariance: a };
}

/** Result of {@link localEmpiricalBayesRates}. */
export interface LocalEmpiricalBayesRates {
  /** Raw rates r_i = O_i / P_i. */
  readonly raw: Float64Array;
  /** Smoothed rates m_i + a_i (r_i − m_i) / (a_i + m_i / P_i); m_i where that denominator is 0. */
  readonly smoothed: Float64Array;
  /** Local prior means m_i = Σ_{j∈N_i} O_j / Σ_{j∈N_i} P_j. */
  readonly localRates: Float64Array;
  /** Local prior variances a_i (clamped at 0). */
  readonly priorVariances: Float64Array;
  /** |N_i| = 1 + the number of neighbours. */
  readonly neighbourhoodSizes: Int32Array;
}

/** Options of {@link localEmpiricalBayesRates}. */
export interface LocalEmpiricalBayesOptions {
  /**
   * Centre of the squared deviations in the local variance. `"local-rate"`
   * (default): every r_j of N_i is compared with region i's own local rate
   * m_i (Marshall 1991; spdep's `EBlocal` with its sixth argument TRUE).
   * `"each-local-rate"`: r_j is compared with region j's local rate m_j
   * (spdep's default `EBlocal`, its reading of Bailey &
   * Gatrell 1995, pp. 305–307).
   */
  readonly deviationsFrom?: "local-rate" | "each-local-rate";
}

/**
 * Local empirical-Bayes rates (Marshall 1991, §3.2): the same shrinkage as
 * {@link globalEmpiricalBayesRates}, but towards a local prior estimated over
 * the neighbourhood N_i = {i} ∪ neighbours(i) of each region (the region
 * itself included; the links of `weights` define the neighbours, their
 * values are ignored):
 *
 *   m_i = Σ_{N_i} O_j / Σ_{N_i} P_j,   P̄_i = Σ_{N_i} P_j / |N_i|,
 *   a_i = max(0, Σ_{N_i} P_j (r_j − m_i)² / Σ_{N_i} P_j − m_i / P̄_i),
 *   smoothed_i = m_i + a_i (r_i − m_i) / (a_i + m_i / P_i).
 *
 * A region without neighbours has N_i = {i}, so a_i = 0 and smoothed_i = r_i.
 * Where a_i + m_i / P_i = 0 (no events anywhere in N_i) the smoothed rate is
 * m_i = 0 (spdep returns NaN there).
 *
 * @param events O_i ≥ 0, aligned with `weights.ids`.
 * @param populations P_i > 0, aligned with `weights.ids`.
 * @param weights neighbour links (without self-links; the region is added).
 * @throws Error for misaligned inputs, a negative or non-finite count, a
 *   non-positive or non-finite population, or a self-link.
 * Cost: O(n + L).
 * @example
 *   localEmpiricalBayesRates(events, populations, queen).smoothed;
 */
export function localEmpiricalBayesRates(
  events: ArrayLike<number>,
  populations: ArrayLike<number>,
  weights: SpatialWeights,
  options: LocalEmpiricalBayesOptions = {},
): LocalEmpiricalBayesRates {
  const n = weights.ids.length;
  if (events.length !== n) throw new Error(`Local empirical Bayes: ${events.length} event counts for ${n} regions of the weights.`);
  checkedCounts(events, populations, "Local empirical Bayes", 1);
  const deviationsFrom = options.deviationsFrom ?? "local-rate";
  if (deviationsFrom !== "local-rate" && deviationsFrom !== "each-local-rate") {
    throw new Error(`deviationsFrom must be "local-rate" or "each-local-rate"; got "${String(deviationsFrom)}".`);
  }
  const { offsets, neighbours } = weights;
  const raw = new Float64Array(n);
  for (let i = 0; i < n; i++) raw[i] = events[i] / populations[i];
  const localRates = new Float64Array(n);
  const localPopulation = new Float64Array(n);
  const sizes = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    let o = events[i];
    let p = populations[i];
    for (let q = offsets[i]; q < offsets[i + 1]; q++) {
      const j = neighbours[q];
      if (j === i) throw new Error(`Local empirical Bayes: region "${weights.ids[i]}" is linked to itself; pass weights without self-links.`);
      o += events[j];
      p += populations[j];
    }
    localRates[i] = o / p;
    localPopulation[i] = p;
    sizes[i] = offsets[i + 1] - offsets[i] + 1;
  }
  const priorVariances = new Float64Array(n);
  const smoothed = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const m = localRates[i];
    const centre = (j: number) => (deviationsFrom === "local-rate" ? m : localRates[j]);
    let squares = populations[i] * (raw[i] - centre(i)) ** 2;
    for (let q = offsets[i]; q < offsets[i + 1]; q++) {
      const j = neighbours[q];
      squares += populations[j] * (raw[j] - centre(j)) ** 2;
    }
    const meanPopulation = localPopulation[i] / sizes[i];
    const a = Math.max(0, squares / localPopulation[i] - m / meanPopulation);
    priorVariances[i] = a;
    const denominator = a + m / populations[i];
    smoothed[i] = denominator > 0 ? m + ((raw[i] - m) * a) / denominator : m;
  }
  return { raw, smoothed, localRates, priorVariances, neighbourhoodSizes: sizes };
}

/** Result of {@link empiricalBayesMoran}. */
export interface EmpiricalBayesMoranResult {
  readonly n: number;
  /** Moran's I of the standardised rates (the EB index). */
  readonly I: number;
  /** The standardised rates z_i that were analysed (see {@link empiricalBayesStandardise}). */
  readonly standardised: Float64Array;
  /** Permutation test (relabelling the z_i), or null without permutations. */
  readonly permutation: PermutationSummary | null;
}

/**
 * Moran's I of empirical-Bayes standardised rates, the EB index of Assunção
 * & Reis (1999), with its permutation test: the z_i of
 * {@link empiricalBayesStandardise} are analysed by {@link globalMoran}, and
 * the test relabels the z_i over the regions (R random relabellings, pseudo
 * p = (M + 1)/(R + 1) per tail). Assunção & Reis recommend this test over the
 * normal approximation, which does not hold for the standardised rates.
 *
 * @param events O_i ≥ 0, aligned with `weights.ids`.
 * @param populations P_i > 0, aligned with `weights.ids`.
 * @param weights spatial weights (W or B), no self-links.
 * @throws Error as {@link empiricalBayesStandardise} and {@link globalMoran}
 *   (n < 4, no links, constant standardised rates, bad permutation options).
 * Cost: O(n + L), plus O(R·(n + L)) for permutations.
 * @example
 *   empiricalBayesMoran(events, births, queenW, { permutations: 999, random: createRandomSource(1) }).I;
 */
export function empiricalBayesMoran(
  events: ArrayLike<number>,
  populations: ArrayLike<number>,
  weights: SpatialWeights,
  options: PermutationOptions = {},
): EmpiricalBayesMoranResult {
  const n = weights.ids.length;
  if (events.length !== n) throw new Error(`Empirical-Bayes Moran: ${events.length} event counts for ${n} regions of the weights.`);
  const { standardised } = empiricalBayesStandardise(events, populations);
  const moran = globalMoran(standardised, weights, options);
  return { n, I: moran.I, standardised, permutation: moran.permutation };
}
