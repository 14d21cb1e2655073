/**
 * Bivariate Moran's I: x against the spatial lag of y.
 */
import type { PermutationOptions, PermutationSummary, SpatialWeights } from "./types";

/** Result of {@link bivariateMoran}. */
export interface BivariateMoranResult {
  readonly n: number;
  /** I_xy = (n/S0) Σ_i z_x,i Σ_j w_ij z_y,j / sqrt(Σ z_x² · Σ z_y²). */
  readonly I: number;
  readonly permutation: PermutationSummary | null;
}

export function bivariateMoran(x: ArrayLike<number>, y: ArrayLike<number>, weights: SpatialWeights, options: PermutationOptions = {}): BivariateMoranResult {
  void x;
  void y;
  void weights;
  void options;
  throw new Error("not implemented yet");
}
