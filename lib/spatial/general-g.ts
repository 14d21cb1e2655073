/**
 * Getis–Ord General G with analytical (randomisation) and permutation inference.
 */
import type { AnalyticalInference, PermutationOptions, PermutationSummary, SpatialWeights } from "./types";
import type { WeightsSums } from "./weights/summary";

/** Result of {@link generalG}. */
export interface GeneralGResult {
  readonly n: number;
  /** G = ΣΣ_{i≠j} w_ij x_i x_j / ΣΣ_{i≠j} x_i x_j. */
  readonly G: number;
  /** E[G] = S0 / (n(n−1)). */
  readonly expectedG: number;
  readonly sums: WeightsSums;
  /** Inference under randomisation (Getis & Ord 1992). */
  readonly randomisation: AnalyticalInference;
  readonly permutation: PermutationSummary | null;
}

export function generalG(values: ArrayLike<number>, weights: SpatialWeights, options: PermutationOptions = {}): GeneralGResult {
  void values;
  void weights;
  void options;
  throw new Error("not implemented yet");
}
