/**
 * Geary's C with analytical and permutation inference.
 */
import type { AnalyticalInference, PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import type { WeightsSums } from "./weights/summary";

/** Result of {@link gearyC}. */
export interface GearyResult {
  readonly n: number;
  /** C = (n−1) ΣΣ w_ij (x_i − x_j)² / (2 S0 Σ z²). */
  readonly C: number;
  /** E[C] = 1. */
  readonly expectedC: number;
  readonly sums: WeightsSums;
  readonly kurtosis: number;
  readonly normality: AnalyticalInference;
  readonly randomisation: AnalyticalInference;
  readonly permutation: PermutationSummary | null;
}

export function gearyC(values: ArrayLike<number>, weights: SpatialWeights, options: PermutationOptions = {}): GearyResult {
  void values;
  void weights;
  void options;
  throw new Error("not implemented yet");
}
