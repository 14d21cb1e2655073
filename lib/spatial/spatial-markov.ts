/**
 * Transitions of classes between two periods: cluster-class transition tables
 * and spatial Markov matrices with a chi-square test of homogeneity (Rey 2001).
 */
import type { SpatialWeights } from "./types";

/** A transition table between two classifications of the same regions. */
export interface TransitionTable<C extends string = string> {
  readonly classes: readonly C[];
  /** counts[a][b]: regions in class a at the earlier period and b at the later. */
  readonly counts: readonly (readonly number[])[];
  /** Row proportions (NaN-free: an empty row stays all zero). */
  readonly probabilities: readonly (readonly number[])[];
}

/** Result of {@link spatialMarkov}. */
export interface SpatialMarkovResult {
  /** Number of quantile classes k. */
  readonly classes: number;
  readonly pooled: TransitionTable;
  /** One k × k table per class of the spatial lag at the earlier period. */
  readonly conditional: readonly TransitionTable[];
  /** Chi-square statistic of homogeneity of the conditional tables. */
  readonly chiSquare: number;
  readonly degreesOfFreedom: number;
  readonly p: number;
}

export function transitionTable<C extends string>(classes: readonly C[], earlier: readonly C[], later: readonly C[]): TransitionTable<C> {
  void classes;
  void earlier;
  void later;
  throw new Error("not implemented yet");
}

export function spatialMarkov(earlier: ArrayLike<number>, later: ArrayLike<number>, weights: SpatialWeights, options: { classes?: number } = {}): SpatialMarkovResult {
  void earlier;
  void later;
  void weights;
  void options;
  throw new Error("not implemented yet");
}
