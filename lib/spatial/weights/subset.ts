/**
 * Restricting weights to a subset of regions (e.g. those with a value in a
 * period) and applying the island policy.
 */
import type { IslandPolicy, RegionPoints, SpatialWeights } from "../types";
import { pointDistance } from "./distance";
import { createSpatialWeights } from "./sparse";

/** Result of {@link applyIslandPolicy}. */
export interface IslandPolicyResult {
  readonly weights: SpatialWeights;
  readonly policy: IslandPolicy;
  /** Ids of the regions that had no neighbour before the policy was applied. */
  readonly islands: readonly string[];
  /** Under `"attach"`: each island and the region it was linked to. */
  readonly attached: readonly { readonly id: string; readonly neighbour: string }[];
  /**
   * Under `"exclude"`: the regions removed — the islands, plus any region left
   * without neighbours once they were removed (possible only with directed
   * weights); else empty.
   */
  readonly excluded: readonly string[];
}

/**
 * Weights restricted to the regions with `keep[i] = true`: rows and columns of
 * the others are removed, with every link between two kept regions kept. If
 * the weights were row-standardised, each row is re-standardised over its
 * remaining neighbours (identical to row-standardising the restricted
 * untransformed weights); binary and general weights keep their values. A
 * region whose neighbours were all removed becomes an island.
 *
 * @param keep one boolean per region of `weights`.
 * @returns new weights over the kept regions, in their original order.
 * @throws Error when `keep` has the wrong length.
 * Cost: O(n + L).
 * @example
 *   restrictWeights(queen, values.map((v) => v !== null));
 */
export function restrictWeights(weights: SpatialWeights, keep: ArrayLike<boolean>): SpatialWeights {
  const n = weights.ids.length;
  if (keep.length !== n) throw new Error(`Restriction needs one flag per region (${n}); got ${keep.length}.`);
  const newIndex = new Int32Array(n).fill(-1);
  const ids: string[] = [];
  for (let i = 0; i < n; i++) {
    if (keep[i]) {
      newIndex[i] = ids.length;
      ids.push(weights.ids[i]);
    }
  }
  const offsets = new Int32Array(ids.length + 1);
  const neighbours: number[] = [];
  const values: number[] = [];
  let row = 0;
  for (let i = 0; i < n; i++) {
    if (newIndex[i] < 0) continue;
    const start = neighbours.length;
    let rowSum = 0;
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = newIndex[weights.neighbours[p]];
      if (j < 0) continue;
      neighbours.push(j);
      values.push(weights.weights[p]);
      rowSum += weights.weights[p];
    }
    if (weights.transform === "row-standardised") {
      for (let q = start; q < values.length; q++) values[q] /= rowSum;
    }
    row++;
    offsets[row] = neighbours.length;
  }
  return {
    ids: Object.freeze(ids),
    offsets,
    neighbours: Int32Array.from(neighbours),
    weights: Float64Array.from(values),
    rule: weights.rule,
    transform: weights.transform,
  };
}

/**
 * Applies an island policy to weights (regions with no neighbour = empty row):
 *
 * - `"exclude"`: removes the islands (repeating while removals leave new
 *   islands, which only directed weights can do); n shrinks.
 * - `"keep"`: returns the weights unchanged; islands keep a zero spatial lag.
 * - `"attach"`: links each island i to its nearest region j by point distance
 *   (ties: the earlier region), in both directions i→j and j→i. The new
 *   link's weight is 1 in an empty row and the mean of the row's existing
 *   weights otherwise (so binary stays binary); row-standardised rows touched
 *   are re-standardised (a region with k binary neighbours then has k + 1
 *   links of 1/(k+1)). Apply it before transforming when possible.
 *
 * @param points region points (same ids as the weights, any order); required for `"attach"`.
 * @throws Error for an unknown policy, `"attach"` without points or with a
 *   region missing from them, or `"attach"` with a single region.
 * Cost: O(n + L) for exclude/keep; O(islands · n) for attach.
 * @example
 *   applyIslandPolicy(queen, "attach", centroids).attached; // [{ id: "isle", neighbour: "coast" }]
 */
export function applyIslandPolicy(weights: SpatialWeights, policy: IslandPolicy, points?: RegionPoints): IslandPolicyResult {
  const n = weights.ids.length;
  const islandIndices: number[] = [];
  for (let i = 0; i < n; i++) if (weights.offsets[i + 1] === weights.offsets[i]) islandIndices.push(i);
  const islands = islandIndices.map((i) => weights.ids[i]);
  if (policy === "keep") return { weights, policy, islands, attached: [], excluded: [] };
  if (policy === "exclude") {
    let current = weights;
    const excluded: string[] = [];
    for (;;) {
      const m = current.ids.length;
      const keep: boolean[] = [];
      let removed = 0;
      for (let i = 0; i < m; i++) {
        const isIsland = current.offsets[i + 1] === current.offsets[i];
        keep.push(!isIsland);
        if (isIsland) {
          removed++;
          excluded.push(current.ids[i]);
        }
      }
      if (removed === 0) break;
      current = restrictWeights(current, keep);
    }
    return { weights: current, policy, islands, attached: [], excluded };
  }
  if (policy !== "attach") throw new Error(`Island policy must be "exclude", "keep" or "attach"; got "${String(policy)}".`);
  if (islandIndices.length === 0) return { weights, policy, islands, attached: [], excluded: [] };
  if (!points) throw new Error('The island policy "attach" needs region points (centroids) to find the nearest region.');
  if (n < 2) throw new Error('The island policy "attach" needs at least 2 regions.');
  // Map weights' regions to point indices.
  const pointIndex = new Map<string, number>();
  points.ids.forEach((id, i) => pointIndex.set(id, i));
  const toPoint = weights.ids.map((id) => {
    const p = pointIndex.get(id);
    if (p === undefined) throw new Error(`Region "${id}" has no point, so it cannot be attached to its nearest region.`);
    return p;
  });
  // Rows as editable maps.
  const rows: Map<number, number>[] = [];
  for (let i = 0; i < n; i++) {
    const row = new Map<number, number>();
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) row.set(weights.neighbours[p], weights.weights[p]);
    rows.push(row);
  }
  const addLink = (from: number, to: number): void => {
    const row = rows[from];
    if (row.has(to)) return;
    let mean = 1;
    if (row.size > 0) {
      let sum = 0;
      for (const w of row.values()) sum += w;
      mean = sum / row.size;
    }
    row.set(to, mean);
  };
  const attached: { id: string; neighbour: string }[] = [];
  for (const i of islandIndices) {
    let best = -1;
    let bestDistance = Infinity;
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const d = pointDistance(points, toPoint[i], toPoint[j]);
      if (d < bestDistance) {
        bestDistance = d;
        best = j;
      }
    }
    addLink(i, best);
    addLink(best, i);
    attached.push({ id: weights.ids[i], neighbour: weights.ids[best] });
  }
  const offsets = new Int32Array(n + 1);
  const neighbours: number[] = [];
  const values: number[] = [];
  for (let i = 0; i < n; i++) {
    let rowSum = 0;
    for (const w of rows[i].values()) rowSum += w;
    for (const [j, w] of rows[i]) {
      neighbours.push(j);
      values.push(weights.transform === "row-standardised" ? w / rowSum : w);
    }
    offsets[i + 1] = neighbours.length;
  }
  const result = createSpatialWeights({
    ids: weights.ids,
    offsets,
    neighbours,
    weights: values,
    rule: weights.rule,
    transform: weights.transform,
  });
  return { weights: result, policy, islands, attached, excluded: [] };
}
