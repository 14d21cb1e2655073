/**
 * Weight transforms: binary (B) and row-standardised (W).
 */
import type { SpatialWeights, WeightsTransform } from "../types";

/**
 * Binary weights (B): every existing link gets weight 1, w_ij = 1 if j is a
 * neighbour of i, else 0. The link structure is unchanged.
 *
 * @returns a new weights object with transform `"binary"`.
 * Cost: O(L).
 * @example
 *   binaryWeights(inverseDistance).weights; // all ones
 */
export function binaryWeights(weights: SpatialWeights): SpatialWeights {
  return {
    ids: weights.ids,
    offsets: weights.offsets.slice(),
    neighbours: weights.neighbours.slice(),
    weights: new Float64Array(weights.neighbours.length).fill(1),
    rule: weights.rule,
    transform: "binary",
  };
}

/**
 * Row-standardised weights (W): w_ij = v_ij / Σ_k v_ik, so each row with
 * neighbours sums to 1 and the spatial lag Σ_j w_ij x_j is the (weighted)
 * mean of the neighbours' values. Rows of islands stay empty (lag zero). With
 * no islands S0 = n.
 *
 * Source: the usual W-coding, e.g. Cliff & Ord (1981), "Spatial Processes".
 * @returns a new weights object with transform `"row-standardised"`.
 * Cost: O(L).
 * @example
 *   const w = rowStandardisedWeights(queen); // a region with 4 neighbours: 0.25 each
 */
export function rowStandardisedWeights(weights: SpatialWeights): SpatialWeights {
  const n = weights.ids.length;
  const result = new Float64Array(weights.weights.length);
  for (let i = 0; i < n; i++) {
    const start = weights.offsets[i];
    const end = weights.offsets[i + 1];
    let rowSum = 0;
    for (let p = start; p < end; p++) rowSum += weights.weights[p];
    for (let p = start; p < end; p++) result[p] = weights.weights[p] / rowSum;
  }
  return {
    ids: weights.ids,
    offsets: weights.offsets.slice(),
    neighbours: weights.neighbours.slice(),
    weights: result,
    rule: weights.rule,
    transform: "row-standardised",
  };
}

/**
 * Applies a transform by name: `"binary"`, `"row-standardised"`, or `"none"`
 * (a copy of the weights as they are).
 *
 * Cost: O(L).
 * @example
 *   transformWeights(queen, "row-standardised");
 */
export function transformWeights(weights: SpatialWeights, transform: WeightsTransform): SpatialWeights {
  if (transform === "binary") return binaryWeights(weights);
  if (transform === "row-standardised") return rowStandardisedWeights(weights);
  return {
    ids: weights.ids,
    offsets: weights.offsets.slice(),
    neighbours: weights.neighbours.slice(),
    weights: weights.weights.slice(),
    rule: weights.rule,
    transform: weights.transform,
  };
}

/**
 * Weights with the diagonal added (w_ii = selfWeight for every region), as
 * used by the Gi* statistic, which counts a region among its own neighbours.
 * Existing self-links are kept as they are.
 *
 * @param selfWeight the weight of each self-link, > 0; default 1.
 * @returns a new weights object with transform `"none"` unless the input was binary and selfWeight = 1.
 * Cost: O(L + n).
 * @example
 *   withSelfLinks(binaryQueen).weights; // each row now includes its own region with weight 1
 */
export function withSelfLinks(weights: SpatialWeights, selfWeight = 1): SpatialWeights {
  if (!Number.isFinite(selfWeight) || selfWeight <= 0) throw new Error(`The self-link weight must be finite and > 0; got ${selfWeight}.`);
  const n = weights.ids.length;
  const offsets = new Int32Array(n + 1);
  const neighbours: number[] = [];
  const values: number[] = [];
  for (let i = 0; i < n; i++) {
    let inserted = false;
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      if (!inserted && j >= i) {
        if (j !== i) {
          neighbours.push(i);
          values.push(selfWeight);
        }
        inserted = true;
      }
      neighbours.push(j);
      values.push(weights.weights[p]);
    }
    if (!inserted) {
      neighbours.push(i);
      values.push(selfWeight);
    }
    offsets[i + 1] = neighbours.length;
  }
  return {
    ids: weights.ids,
    offsets,
    neighbours: Int32Array.from(neighbours),
    weights: Float64Array.from(values),
    rule: weights.rule,
    transform: weights.transform === "binary" && selfWeight === 1 ? "binary" : "none",
  };
}
