/**
 * Summaries of a weights object: the constants S0, S1, S2 used by every
 * global test, the neighbour-count distribution, islands and connected
 * components.
 */
import type { SpatialWeights } from "../types";
import { linkWeight } from "./sparse";

/** The sums of weights that enter the moments of global statistics. */
export interface WeightsSums {
  /** S0 = Σ_i Σ_j w_ij. */
  readonly S0: number;
  /** S1 = ½ Σ_i Σ_j (w_ij + w_ji)². */
  readonly S1: number;
  /** S2 = Σ_i (w_i· + w_·i)², with w_i· the row sum and w_·i the column sum. */
  readonly S2: number;
}

/**
 * S0, S1 and S2 of a weights matrix (Cliff & Ord 1981, "Spatial Processes:
 * Models & Applications", ch. 1–2):
 *   S0 = ΣΣ w_ij,  S1 = ½ ΣΣ (w_ij + w_ji)²,  S2 = Σ_i (w_i· + w_·i)².
 *
 * S1 is computed over links: each link i→j contributes (w_ij + w_ji)² once
 * from row i and once from row j when the reverse link exists, and only from
 * row i when it does not — hence ½ Σ over links plus ½ for unmatched links.
 *
 * Cost: O(L log k_max).
 * @example
 *   weightsSums(binaryRookOnTwoByTwoLattice); // { S0: 8, S1: 16, S2: 64 }
 */
export function weightsSums(weights: SpatialWeights): WeightsSums {
  const n = weights.ids.length;
  const rowSums = new Float64Array(n);
  const columnSums = new Float64Array(n);
  let S0 = 0;
  let S1 = 0;
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      const w = weights.weights[p];
      S0 += w;
      rowSums[i] += w;
      columnSums[j] += w;
      const back = linkWeight(weights, j, i);
      const sum = w + back;
      // The ordered pairs (i,j) and (j,i) each contribute (w_ij + w_ji)² to
      // ½ΣΣ, i.e. one full term per unordered pair. If j→i is also a link,
      // row j visits this pair again, so each visit adds half the term;
      // otherwise this is the only visit and it adds the full term.
      S1 += back > 0 ? 0.5 * sum * sum : sum * sum;
    }
  }
  let S2 = 0;
  for (let i = 0; i < n; i++) {
    const t = rowSums[i] + columnSums[i];
    S2 += t * t;
  }
  return { S0, S1, S2 };
}

/** Distribution of the number of neighbours per region. */
export interface NeighbourCountDistribution {
  readonly min: number;
  readonly max: number;
  readonly mean: number;
  /** `[{ neighbours: k, regions: count }]` for every k that occurs, ascending. */
  readonly histogram: readonly { readonly neighbours: number; readonly regions: number }[];
}

/** Connected components of the (undirected version of the) neighbour graph. */
export interface ConnectedComponents {
  /** Number of components; every island is a component of size 1. */
  readonly count: number;
  /** Component label (0-based, in order of first region) for every region. */
  readonly labels: Int32Array;
  /** Size of each component, indexed by label. */
  readonly sizes: readonly number[];
}

/** Everything a results page shows about a weights object. */
export interface WeightsSummary extends WeightsSums {
  readonly n: number;
  readonly rule: string;
  readonly transform: SpatialWeights["transform"];
  /** Number of links (non-zero w_ij). */
  readonly links: number;
  readonly neighbourCounts: NeighbourCountDistribution;
  /** Ids of regions without any neighbour (row empty). */
  readonly islands: readonly string[];
  readonly components: ConnectedComponents;
  /** Whether w_ij = w_ji for all pairs. */
  readonly symmetric: boolean;
}

/**
 * Connected components of the neighbour graph, treating every link as
 * undirected (union–find with path halving).
 *
 * Cost: O(L α(n)).
 * @example
 *   connectedComponents(weights).count; // 1 for a lattice
 */
export function connectedComponents(weights: SpatialWeights): ConnectedComponents {
  const n = weights.ids.length;
  const parent = new Int32Array(n);
  for (let i = 0; i < n; i++) parent[i] = i;
  const find = (a: number): number => {
    while (parent[a] !== a) {
      parent[a] = parent[parent[a]];
      a = parent[a];
    }
    return a;
  };
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const a = find(i);
      const b = find(weights.neighbours[p]);
      if (a !== b) parent[a < b ? b : a] = a < b ? a : b;
    }
  }
  const labels = new Int32Array(n);
  const rootLabel = new Map<number, number>();
  const sizes: number[] = [];
  for (let i = 0; i < n; i++) {
    const root = find(i);
    let label = rootLabel.get(root);
    if (label === undefined) {
      label = sizes.length;
      rootLabel.set(root, label);
      sizes.push(0);
    }
    labels[i] = label;
    sizes[label]++;
  }
  return { count: sizes.length, labels, sizes };
}

/**
 * Summary of a weights object: n, S0, S1, S2, link count, the neighbour-count
 * distribution, islands (regions with no neighbours) and connected
 * components.
 *
 * Cost: O(L log k_max).
 * @example
 *   summariseWeights(queen).islands; // [] when every region touches another
 */
export function summariseWeights(weights: SpatialWeights): WeightsSummary {
  const n = weights.ids.length;
  const histogram = new Map<number, number>();
  const islands: string[] = [];
  let min = Infinity;
  let max = 0;
  for (let i = 0; i < n; i++) {
    const k = weights.offsets[i + 1] - weights.offsets[i];
    histogram.set(k, (histogram.get(k) ?? 0) + 1);
    if (k < min) min = k;
    if (k > max) max = k;
    if (k === 0) islands.push(weights.ids[i]);
  }
  const links = weights.neighbours.length;
  let symmetric = true;
  for (let i = 0; i < n && symmetric; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const back = linkWeight(weights, weights.neighbours[p], i);
      const w = weights.weights[p];
      if (Math.abs(back - w) > 1e-12 * Math.max(w, back)) {
        symmetric = false;
        break;
      }
    }
  }
  return {
    n,
    rule: weights.rule,
    transform: weights.transform,
    links,
    ...weightsSums(weights),
    neighbourCounts: {
      min: n === 0 ? 0 : min,
      max,
      mean: n === 0 ? 0 : links / n,
      histogram: [...histogram.entries()].sort((a, b) => a[0] - b[0]).map(([neighbours, regions]) => ({ neighbours, regions })),
    },
    islands,
    components: connectedComponents(weights),
    symmetric,
  };
}
