/**
 * Internal helpers shared by the statistics (not part of the public API).
 */
import type { SpatialWeights } from "./types";

/**
 * Copies `values` into a Float64Array after checking it is aligned with the
 * weights and finite everywhere.
 */
export function checkedValues(values: ArrayLike<number>, weights: SpatialWeights, what = "values"): Float64Array {
  const n = weights.ids.length;
  if (values.length !== n) {
    throw new Error(`Expected ${n} ${what} (one per region of the weights); got ${values.length}.`);
  }
  const copy = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (typeof v !== "number" || !Number.isFinite(v)) {
      throw new Error(`The ${what} of region "${weights.ids[i]}" is not a finite number (${String(v)}); exclude missing values first.`);
    }
    copy[i] = v;
  }
  return copy;
}

/** Deviations from the mean, z_i = x_i − x̄, with Σz² (throws when constant). */
export function centred(x: Float64Array, weights: SpatialWeights, what = "variable"): { z: Float64Array; sumSquares: number; mean: number } {
  const n = x.length;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += x[i];
  mean /= n;
  const z = new Float64Array(n);
  let sumSquares = 0;
  for (let i = 0; i < n; i++) {
    z[i] = x[i] - mean;
    sumSquares += z[i] * z[i];
  }
  // A constant variable: every deviation is (numerically) zero.
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(x[i]));
  if (sumSquares === 0 || Math.sqrt(sumSquares / n) <= 1e-13 * Math.max(scale, 1e-300)) {
    throw new Error(`The ${what} is constant across the ${n} regions of "${weights.rule}" weights; spatial autocorrelation is undefined.`);
  }
  return { z, sumSquares, mean };
}

/** Throws unless n ≥ minimum, naming the formula that needs it. */
export function requireRegions(n: number, minimum: number, formula: string): void {
  if (n < minimum) throw new Error(`${formula} needs at least ${minimum} regions; got ${n}.`);
}

/** Spatial lag Σ_j w_ij v_j of every region into `out`. */
export function spatialLagInto(weights: SpatialWeights, v: Float64Array, out: Float64Array): Float64Array {
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  const n = weights.ids.length;
  for (let i = 0; i < n; i++) {
    let sum = 0;
    for (let p = offsets[i]; p < offsets[i + 1]; p++) sum += w[p] * v[neighbours[p]];
    out[i] = sum;
  }
  return out;
}

/** Tolerance for "as extreme as observed" comparisons of permuted statistics. */
export function tieTolerance(observed: number, scale: number): number {
  return 1e-10 * Math.max(Math.abs(observed), Math.abs(scale), 1e-300);
}

/** Converts NaN or ±Infinity to null for JSON-friendly results. */
export function finiteOrNull(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}
