/**
 * Moran scatter-plot data: standardised values against their spatial lag.
 */
import type { SpatialWeights } from "./types";
import type { Quadrant } from "./local-moran";

/** Result of {@link moranScatterPlot}. */
export interface MoranScatterPlot {
  readonly ids: readonly string[];
  /** z_i = (x_i − x̄)/s, s² = Σ(x − x̄)²/n. */
  readonly z: Float64Array;
  /** (Wz)_i = Σ_j w_ij z_j. */
  readonly lag: Float64Array;
  readonly quadrant: readonly Quadrant[];
  /** Least-squares slope of lag on z through the origin: Σ z·Wz / Σ z² (= I when S0 = n). */
  readonly slope: number;
}

export function moranScatterPlot(values: ArrayLike<number>, weights: SpatialWeights): MoranScatterPlot {
  void values;
  void weights;
  throw new Error("not implemented yet");
}
