/**
 * Empirical-Bayes standardisation of rates (Assunção & Reis 1999).
 */

/** Result of {@link empiricalBayesStandardise}. */
export interface EmpiricalBayesResult {
  /** Raw rates r_i = events_i / population_i. */
  readonly rates: Float64Array;
  /** Global rate b = Σ events / Σ population. */
  readonly globalRate: number;
  /** Method-of-moments between-region variance a = s² − b / (Σ population / n). */
  readonly betweenVariance: number;
  /** Variance v_i = a + b / population_i (b / population_i where that is negative). */
  readonly variances: Float64Array;
  /** Standardised values z_i = (r_i − b) / sqrt(v_i). */
  readonly standardised: Float64Array;
}

export function empiricalBayesStandardise(events: ArrayLike<number>, populations: ArrayLike<number>): EmpiricalBayesResult {
  void events;
  void populations;
  throw new Error("not implemented yet");
}
