/**
 * Construction and validation of spatial weights in compressed sparse row
 * (CSR) form. See {@link SpatialWeights} for the layout.
 */
import type { SpatialWeights, WeightsTransform } from "../types";

/** The raw parts of a CSR weights object, before validation. */
export interface SpatialWeightsParts {
  readonly ids: readonly string[];
  readonly offsets: ArrayLike<number>;
  readonly neighbours: ArrayLike<number>;
  readonly weights: ArrayLike<number>;
  readonly rule: string;
  readonly transform: WeightsTransform;
}

/** Options of {@link createSpatialWeights}. */
export interface CreateWeightsOptions {
  /** Allow links i → i (only Gi*-style weights need them). Default false. */
  readonly allowSelfLinks?: boolean;
}

/**
 * Creates a validated {@link SpatialWeights} object from CSR parts, copying
 * every array (the input is never kept or mutated) and sorting each row by
 * neighbour index.
 *
 * @param parts ids (unique strings), offsets (length n+1), neighbours and
 *   weights (same length = offsets[n]), a rule label and the transform.
 * @throws Error for duplicate or empty ids, malformed offsets, a neighbour
 *   index out of range, a repeated neighbour within a row, a self-link (unless
 *   allowed), or a weight that is not finite and > 0.
 * Cost: O(n + L log k_max) for L links.
 * @example
 *   // two regions linked both ways
 *   createSpatialWeights({ ids: ["a", "b"], offsets: [0, 1, 2], neighbours: [1, 0],
 *     weights: [1, 1], rule: "edge-list", transform: "binary" });
 */
export function createSpatialWeights(parts: SpatialWeightsParts, options: CreateWeightsOptions = {}): SpatialWeights {
  const n = parts.ids.length;
  const ids = checkIds(parts.ids);
  if (parts.offsets.length !== n + 1) {
    throw new Error(`Weights offsets must have n + 1 = ${n + 1} entries; got ${parts.offsets.length}.`);
  }
  const links = parts.neighbours.length;
  if (parts.weights.length !== links) {
    throw new Error(`Weights: ${links} neighbour indices but ${parts.weights.length} weights.`);
  }
  const offsets = Int32Array.from(parts.offsets);
  if (offsets[0] !== 0 || offsets[n] !== links) {
    throw new Error(`Weights offsets must start at 0 and end at the number of links (${links}).`);
  }
  for (let i = 0; i < n; i++) {
    if (offsets[i + 1] < offsets[i]) throw new Error(`Weights offsets decrease at row ${i} (region "${ids[i]}").`);
  }
  const neighbours = new Int32Array(links);
  const weights = new Float64Array(links);
  const order: number[] = [];
  for (let i = 0; i < n; i++) {
    const start = offsets[i];
    const end = offsets[i + 1];
    order.length = 0;
    for (let p = start; p < end; p++) order.push(p);
    order.sort((a, b) => parts.neighbours[a] - parts.neighbours[b]);
    for (let q = 0; q < order.length; q++) {
      const p = order[q];
      const j = parts.neighbours[p];
      const w = parts.weights[p];
      if (!Number.isInteger(j) || j < 0 || j >= n) {
        throw new Error(`Weights: neighbour index ${String(j)} of region "${ids[i]}" is out of range 0..${n - 1}.`);
      }
      if (j === i && !options.allowSelfLinks) {
        throw new Error(`Weights: region "${ids[i]}" is linked to itself.`);
      }
      if (!Number.isFinite(w) || w <= 0) {
        throw new Error(`Weights: the link "${ids[i]}" → "${ids[j]}" has weight ${String(w)}; weights must be finite and > 0.`);
      }
      if (q > 0 && neighbours[start + q - 1] === j) {
        throw new Error(`Weights: the link "${ids[i]}" → "${ids[j]}" appears twice.`);
      }
      neighbours[start + q] = j;
      weights[start + q] = w;
    }
  }
  return { ids, offsets, neighbours, weights, rule: parts.rule, transform: parts.transform };
}

function checkIds(ids: readonly string[]): readonly string[] {
  const seen = new Set<string>();
  for (const id of ids) {
    if (typeof id !== "string" || id.length === 0) throw new Error("Region ids must be non-empty strings.");
    if (seen.has(id)) throw new Error(`Region id "${id}" appears more than once.`);
    seen.add(id);
  }
  return Object.freeze(ids.slice());
}

/**
 * Builds weights from neighbour lists: `lists[i]` holds the indices of the
 * neighbours of region i, with optional `weightLists[i]` aligned to it
 * (default 1 for every link, transform `"binary"`).
 *
 * @throws Error as {@link createSpatialWeights}, or when list lengths differ.
 * Cost: O(n + L log k_max).
 * @example
 *   weightsFromNeighbourLists(["a", "b", "c"], [[1], [0, 2], [1]], { rule: "path" });
 */
export function weightsFromNeighbourLists(
  ids: readonly string[],
  lists: readonly (readonly number[])[],
  options: { rule: string; weightLists?: readonly (readonly number[])[]; transform?: WeightsTransform },
): SpatialWeights {
  if (lists.length !== ids.length) {
    throw new Error(`Neighbour lists: ${lists.length} lists for ${ids.length} regions.`);
  }
  const offsets = new Int32Array(ids.length + 1);
  let total = 0;
  for (let i = 0; i < lists.length; i++) {
    total += lists[i].length;
    offsets[i + 1] = total;
  }
  const neighbours = new Int32Array(total);
  const weights = new Float64Array(total);
  for (let i = 0; i < lists.length; i++) {
    const list = lists[i];
    const weightList = options.weightLists?.[i];
    if (weightList !== undefined && weightList.length !== list.length) {
      throw new Error(`Neighbour lists: region "${ids[i]}" has ${list.length} neighbours but ${weightList.length} weights.`);
    }
    for (let q = 0; q < list.length; q++) {
      neighbours[offsets[i] + q] = list[q];
      weights[offsets[i] + q] = weightList === undefined ? 1 : weightList[q];
    }
  }
  const transform = options.transform ?? (options.weightLists === undefined ? "binary" : "none");
  return createSpatialWeights({ ids, offsets, neighbours, weights, rule: options.rule, transform });
}

/** One row of an uploaded edge list. */
export interface WeightedEdge {
  readonly from: string;
  readonly to: string;
  /** Link weight, > 0; default 1. */
  readonly weight?: number;
}

/** Options of {@link weightsFromEdgeList}. */
export interface EdgeListOptions {
  /**
   * When true, each edge from → to also creates to → from with the same weight
   * (unless that edge is listed too, in which case the weights must agree).
   * Default false: the edges are directed, exactly as listed.
   */
  readonly undirected?: boolean;
  /** Rule label reported with the weights; default "edge-list". */
  readonly rule?: string;
}

/**
 * Builds weights from an edge list (from, to, weight), e.g. an uploaded CSV.
 * Regions of `ids` that appear in no edge become islands. The transform is
 * `"binary"` when every weight is 1, else `"none"`.
 *
 * @param ids all region ids, in the row order wanted.
 * @param edges the links; `weight` defaults to 1.
 * @throws Error naming the first few edges whose ids are not in `ids`, a
 *   self-link, a repeated edge, a weight that is not finite and > 0, or
 *   (undirected) an edge listed both ways with different weights.
 * Cost: O(n + L log k_max).
 * @example
 *   weightsFromEdgeList(["a", "b", "c"], [{ from: "a", to: "b" }, { from: "b", to: "c" }], { undirected: true });
 */
export function weightsFromEdgeList(
  ids: readonly string[],
  edges: readonly WeightedEdge[],
  options: EdgeListOptions = {},
): SpatialWeights {
  const index = new Map<string, number>();
  ids.forEach((id, i) => index.set(id, i));
  const unknown: string[] = [];
  const rows: Map<number, number>[] = ids.map(() => new Map<number, number>());
  const add = (i: number, j: number, w: number, mirrored: boolean): void => {
    const existing = rows[i].get(j);
    if (existing !== undefined) {
      if (!mirrored && !options.undirected) {
        throw new Error(`Edge list: the edge "${ids[i]}" → "${ids[j]}" is listed twice.`);
      }
      if (existing !== w) {
        throw new Error(`Edge list: "${ids[i]}" → "${ids[j]}" has weights ${existing} and ${w}.`);
      }
      return;
    }
    rows[i].set(j, w);
  };
  const listed = new Set<string>();
  for (const edge of edges) {
    const i = index.get(edge.from);
    const j = index.get(edge.to);
    if (i === undefined) unknown.push(edge.from);
    if (j === undefined) unknown.push(edge.to);
    if (i === undefined || j === undefined) continue;
    const w = edge.weight ?? 1;
    if (!Number.isFinite(w) || w <= 0) {
      throw new Error(`Edge list: the edge "${edge.from}" → "${edge.to}" has weight ${String(w)}; weights must be finite and > 0.`);
    }
    if (i === j) throw new Error(`Edge list: region "${edge.from}" is linked to itself.`);
    const key = `${i} ${j}`;
    if (listed.has(key)) throw new Error(`Edge list: the edge "${edge.from}" → "${edge.to}" is listed twice.`);
    listed.add(key);
    add(i, j, w, false);
    if (options.undirected) add(j, i, w, true);
  }
  if (unknown.length > 0) {
    const distinct = [...new Set(unknown)];
    throw new Error(
      `Edge list: ${distinct.length} id(s) not among the regions, e.g. ${distinct.slice(0, 5).map((s) => `"${s}"`).join(", ")}.`,
    );
  }
  let allOne = true;
  const lists = rows.map((row) => [...row.keys()]);
  const weightLists = rows.map((row) => [...row.values()]);
  for (const list of weightLists) for (const w of list) if (w !== 1) allOne = false;
  return weightsFromNeighbourLists(ids, lists, {
    rule: options.rule ?? "edge-list",
    weightLists,
    transform: allOne ? "binary" : "none",
  });
}

/**
 * Whether w_ij = w_ji for every pair (within a relative tolerance of 1e-12).
 * Contiguity and band weights are symmetric in binary form; row-standardised
 * weights usually are not.
 *
 * Cost: O(L log k_max).
 * @example
 *   isSymmetric(weights); // true for binary queen weights
 */
export function isSymmetric(weights: SpatialWeights): boolean {
  const n = weights.ids.length;
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      const back = linkWeight(weights, j, i);
      const w = weights.weights[p];
      if (Math.abs(back - w) > 1e-12 * Math.max(Math.abs(w), Math.abs(back))) return false;
    }
  }
  return true;
}

/**
 * The weight w_ij of the link i → j, or 0 when there is none (binary search
 * in row i).
 *
 * Cost: O(log k_i).
 * @example
 *   linkWeight(weights, 0, 1); // 1 if region 0 links to region 1 in binary weights
 */
export function linkWeight(weights: SpatialWeights, i: number, j: number): number {
  let low = weights.offsets[i];
  let high = weights.offsets[i + 1] - 1;
  while (low <= high) {
    const middle = (low + high) >> 1;
    const c = weights.neighbours[middle];
    if (c === j) return weights.weights[middle];
    if (c < j) low = middle + 1;
    else high = middle - 1;
  }
  return 0;
}

/**
 * The number of neighbours k_i of every region, as an Int32Array of length n.
 *
 * Cost: O(n).
 * @example
 *   neighbourCounts(weights)[0]; // neighbours of the first region
 */
export function neighbourCounts(weights: SpatialWeights): Int32Array {
  const n = weights.ids.length;
  const counts = new Int32Array(n);
  for (let i = 0; i < n; i++) counts[i] = weights.offsets[i + 1] - weights.offsets[i];
  return counts;
}
