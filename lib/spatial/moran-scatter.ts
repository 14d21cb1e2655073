/**
 * Moran scatter-plot data: standardised values against their spatial lag.
 */
import type { SpatialWeights } from "./types";
import type { Quadrant } from "./local-moran";
import { centred, checkedValues, requireRegions, spatialLagInto } from "./internal";

/** Result of {@link moranScatterPlot}. */
export interface MoranScatterPlot {
  readonly ids: readonly string[];
  /** z_i = (x_i − x̄)/s with s² = Σ(x − x̄)²/n. */
  readonly z: Float64Array;
  /** (Wz)_i = Σ_j w_ij z_j. */
  readonly lag: Float64Array;
  /** Quadrant from the signs of z_i and (Wz)_i (0 counts as High). */
  readonly quadrant: readonly Quadrant[];
  /** Slope of the least-squares line of Wz on z through the origin, Σ z·Wz / Σ z². */
  readonly slope: number;
  /** Moran's I = (n/S0) · slope; equal to the slope when S0 = n (row-standardised, no islands). */
  readonly I: number;
}

/**
 * Moran scatter-plot data (L. Anselin 1996, "The Moran scatterplot as an ESDA
 * tool to assess local instability in spatial association", in Fischer,
 * Scholten & Unwin (eds.), Spatial Analytical Perspectives on GIS): each
 * region's standardised value z_i against its spatial lag (Wz)_i. Since the
 * z are centred, the least-squares slope of Wz on z (with or without an
 * intercept) is Σ z·Wz / Σ z² = (S0/n)·I, which is I itself for
 * row-standardised weights without islands.
 *
 * @throws Error for misaligned or non-finite values, a constant variable or n < 2.
 * Cost: O(n + L).
 * @example
 *   const plot = moranScatterPlot(values, rowStandardised); // plot.slope === I
 */
export function moranScatterPlot(values: ArrayLike<number>, weights: SpatialWeights): MoranScatterPlot {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 2, "A Moran scatter plot");
  const { z: deviations, sumSquares } = centred(x, weights);
  const sd = Math.sqrt(sumSquares / n);
  const z = deviations.map((d) => d / sd);
  const lag = spatialLagInto(weights, z, new Float64Array(n));
  let cross = 0;
  let squares = 0;
  let S0 = 0;
  for (let i = 0; i < n; i++) {
    cross += z[i] * lag[i];
    squares += z[i] * z[i];
  }
  for (let p = 0; p < weights.weights.length; p++) S0 += weights.weights[p];
  const slope = cross / squares;
  const quadrant: Quadrant[] = [];
  for (let i = 0; i < n; i++) quadrant.push(z[i] >= 0 ? (lag[i] >= 0 ? "HH" : "HL") : lag[i] >= 0 ? "LH" : "LL");
  return { ids: weights.ids, z, lag, quadrant, slope, I: S0 > 0 ? (n / S0) * slope : NaN };
}
