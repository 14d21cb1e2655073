/**
 * Local Getis–Ord statistics Gi and Gi* with z-scores and conditional
 * permutation inference.
 */
import type { PermutationOptions, SpatialWeights } from "./types";

/** One region of a {@link localGetisOrd} result. */
export interface LocalGetisOrdRegion {
  readonly id: string;
  /** G_i (or G_i*) = Σ_j w_ij x_j / Σ_j x_j (j ≠ i for Gi; all j for Gi*). */
  readonly G: number;
  readonly expectedG: number;
  readonly varianceG: number;
  /** Standardised statistic (Ord & Getis 1995). */
  readonly z: number;
  readonly p: number;
  readonly pseudoP: number | null;
  readonly pseudoPGreater: number | null;
  readonly pseudoPLess: number | null;
}

/** Result of {@link localGetisOrd}. */
export interface LocalGetisOrdResult {
  readonly n: number;
  /** true for Gi* (region i included with self-weight), false for Gi. */
  readonly star: boolean;
  readonly permutations: number;
  readonly regions: readonly LocalGetisOrdRegion[];
}

/** Options of {@link localGetisOrd}. */
export interface LocalGetisOrdOptions extends PermutationOptions {
  /** Gi* (default true) or Gi. */
  readonly star?: boolean;
  /** Self-weight w_ii for Gi* when the weights have no diagonal; default 1. */
  readonly selfWeight?: number;
}

export function localGetisOrd(values: ArrayLike<number>, weights: SpatialWeights, options: LocalGetisOrdOptions = {}): LocalGetisOrdResult {
  void values;
  void weights;
  void options;
  throw new Error("not implemented yet");
}
