/**
 * Transitions of classes between two periods: cluster-class transition tables
 * and spatial Markov matrices with a chi-square test of homogeneity.
 */
import type { SpatialWeights } from "./types";
import type { ClusterClass, LocalMoranResult } from "./local-moran";
import { checkedValues, requireRegions, spatialLagInto } from "./internal";
import { chiSquareUpperTail } from "./distributions";

/** A transition table between two classifications of the same regions. */
export interface TransitionTable<C extends string = string> {
  readonly classes: readonly C[];
  /** counts[a][b]: regions in class a at the earlier period and b at the later. */
  readonly counts: readonly (readonly number[])[];
  /** Row proportions; an empty row stays all zero. */
  readonly probabilities: readonly (readonly number[])[];
}

/** Result of {@link spatialMarkov}. */
export interface SpatialMarkovResult {
  /** Number of quantile classes k (classes 0 … k−1, low to high). */
  readonly classes: number;
  /** Transition table of the regions' classes, all lag classes pooled. */
  readonly pooled: TransitionTable;
  /** One k × k table per class of the spatial lag at the earlier period. */
  readonly conditional: readonly TransitionTable[];
  /** Chi-square statistic of homogeneity of the conditional tables. */
  readonly chiSquare: number;
  readonly degreesOfFreedom: number;
  /** Upper-tail p of the statistic (NaN when degrees of freedom are 0). */
  readonly p: number;
}

/**
 * Counts transitions between two classifications of the same regions.
 *
 * @param classes the class labels, in the order of rows and columns.
 * @param earlier, later one label per region, aligned.
 * @throws Error for different lengths or a label not in `classes`.
 * Cost: O(n + c²).
 * @example
 *   transitionTable(["low", "high"], ["low", "low"], ["low", "high"]).counts; // [[1, 1], [0, 0]]
 */
export function transitionTable<C extends string>(classes: readonly C[], earlier: readonly C[], later: readonly C[]): TransitionTable<C> {
  if (earlier.length !== later.length) throw new Error(`Transitions: ${earlier.length} earlier but ${later.length} later classes.`);
  const index = new Map<string, number>();
  classes.forEach((c, i) => index.set(c, i));
  const counts = classes.map(() => classes.map(() => 0));
  for (let r = 0; r < earlier.length; r++) {
    const a = index.get(earlier[r]);
    const b = index.get(later[r]);
    if (a === undefined || b === undefined) throw new Error(`Transitions: class "${a === undefined ? earlier[r] : later[r]}" is not among the classes.`);
    counts[a][b]++;
  }
  return { classes: classes.slice(), counts, probabilities: rowProportions(counts) };
}

function rowProportions(counts: readonly (readonly number[])[]): number[][] {
  return counts.map((row) => {
    const total = row.reduce((s, v) => s + v, 0);
    return row.map((v) => (total > 0 ? v / total : 0));
  });
}

/** The cluster classes in the order used by {@link clusterTransitions}. */
export const CLUSTER_CLASSES: readonly ClusterClass[] = ["HH", "LL", "HL", "LH", "not-significant", "no-neighbours"];

/**
 * Transition table of local Moran cluster classes between two periods,
 * matching regions by id (regions present in only one result are skipped and
 * counted).
 *
 * Cost: O(n).
 * @example
 *   clusterTransitions(lisa2013, lisa2020).table.counts[0][4]; // HH in 2013 → not significant in 2020
 */
export function clusterTransitions(
  earlier: LocalMoranResult,
  later: LocalMoranResult,
): { readonly table: TransitionTable<ClusterClass>; readonly unmatched: number } {
  const laterById = new Map<string, ClusterClass>();
  for (const r of later.regions) laterById.set(r.id, r.cluster);
  const from: ClusterClass[] = [];
  const to: ClusterClass[] = [];
  let matched = 0;
  for (const r of earlier.regions) {
    const c = laterById.get(r.id);
    if (c === undefined) continue;
    from.push(r.cluster);
    to.push(c);
    matched++;
  }
  const unmatched = earlier.regions.length - matched + (later.regions.length - matched);
  return { table: transitionTable(CLUSTER_CLASSES, from, to), unmatched };
}

/** Quantile class 0..k−1 of each value: the number of cut points (type-7 quantiles at j/k) strictly below it. */
function quantileClasses(values: Float64Array, k: number): Int32Array {
  const sorted = Float64Array.from(values).sort();
  const cuts: number[] = [];
  for (let j = 1; j < k; j++) {
    const h = (sorted.length - 1) * (j / k);
    const low = Math.floor(h);
    const high = Math.min(sorted.length - 1, low + 1);
    cuts.push(sorted[low] + (h - low) * (sorted[high] - sorted[low]));
  }
  const out = new Int32Array(values.length);
  for (let i = 0; i < values.length; i++) {
    let c = 0;
    while (c < cuts.length && values[i] > cuts[c]) c++;
    out[i] = c;
  }
  return out;
}

/**
 * Spatial Markov transition matrices (S. J. Rey 2001, "Spatial empirics for
 * economic growth and convergence", Geographical Analysis 33(3)): regions are
 * put in k quantile classes of y at each period, and the k × k transition
 * table from the earlier to the later period is split by the quantile class
 * of the region's spatial lag at the earlier period. If space does not
 * matter, the conditional tables equal the pooled one. Homogeneity test
 * (T. W. Anderson & L. A. Goodman 1957; degrees of freedom as in
 * F. Bickenbach & E. Bode 2003, International Regional Science Review 26(3)):
 *
 *   Q = Σ_l Σ_i Σ_j n_l,i (p_l,ij − p_ij)² / p_ij   over cells with p_ij > 0, n_l,i > 0,
 *   df = Σ_i (a_i − 1)(b_i − 1),
 *
 * with n_l,i the regions in class i and lag class l, p_l,ij the conditional
 * and p_ij the pooled transition probabilities, a_i the number of lag
 * classes with n_l,i > 0 and b_i the number of j with p_ij > 0.
 *
 * Quantile classes use type-7 quantiles at j/k; a value equal to a cut point
 * goes to the lower class.
 *
 * @param earlier, later one finite value per region, aligned with the weights.
 * @param options classes k (integer 2..20, default 5).
 * @throws Error for misaligned or non-finite values, fewer than 2k regions, bad k.
 * Cost: O(n log n + L + k³).
 * @example
 *   spatialMarkov(income2010, income2020, rowStandardised, { classes: 5 }).p;
 */
export function spatialMarkov(
  earlier: ArrayLike<number>,
  later: ArrayLike<number>,
  weights: SpatialWeights,
  options: { classes?: number } = {},
): MarkovHomogeneity {
  const k = checkedClassCount(options.classes);
  const conditionalCounts = emptyConditionalCounts(k);
  addPairTransitions(conditionalCounts, earlier, later, weights, k, "Spatial Markov with " + k + " classes");
  return markovHomogeneity(conditionalCounts);
}

function checkedClassCount(classes: number | undefined): number {
  const k = classes ?? 5;
  if (!Number.isInteger(k) || k < 2 || k > 20) throw new Error(`Spatial Markov: classes must be an integer from 2 to 20; got ${String(k)}.`);
  return k;
}

/** counts[l][i][j], all zero, for k classes. */
function emptyConditionalCounts(k: number): number[][][] {
  return Array.from({ length: k }, () => Array.from({ length: k }, () => new Array<number>(k).fill(0)));
}

/** Classes one pair of periods and adds its transitions to counts[lag class][earlier class][later class]; returns n. */
function addPairTransitions(counts: number[][][], earlier: ArrayLike<number>, later: ArrayLike<number>, weights: SpatialWeights, k: number, formula: string): number {
  const a = checkedValues(earlier, weights, "earlier values");
  const b = checkedValues(later, weights, "later values");
  const n = a.length;
  requireRegions(n, 2 * k, formula);
  const lag = spatialLagInto(weights, a, new Float64Array(n));
  const fromClass = quantileClasses(a, k);
  const toClass = quantileClasses(b, k);
  const lagClass = quantileClasses(lag, k);
  for (let i = 0; i < n; i++) counts[lagClass[i]][fromClass[i]][toClass[i]]++;
  return n;
}

/** Result of {@link markovHomogeneity}. */
export interface MarkovHomogeneity extends SpatialMarkovResult {
  /** Cells n_l,i · p_ij that enter Q (n_l,i > 0 and p_ij > 0). */
  readonly cells: number;
  /** How many of those cells expect fewer than 5 transitions (the χ² approximation is rough when they are many). */
  readonly expectedBelow5: number;
}

/**
 * The pooled table and the test of homogeneity of conditional transition
 * tables (Anderson & Goodman 1957; degrees of freedom as in Bickenbach & Bode
 * 2003), as in {@link spatialMarkov}: the pooled table is the sum of the
 * conditional ones, and
 *
 *   Q = Σ_l Σ_i Σ_j n_l,i (p_l,ij − p_ij)² / p_ij   over cells with p_ij > 0, n_l,i > 0,
 *   df = Σ_i (a_i − 1)(b_i − 1).
 *
 * The expected count of a cell is n_l,i · p_ij; the cells expecting fewer than
 * 5 are counted for the usual caution about the χ² approximation.
 *
 * @param conditional counts[l][i][j]: transitions from class i to class j of
 *   regions whose lag was in class l; k × k × k non-negative integers.
 * @throws Error when the array is not k × k × k with k ≥ 2.
 * Cost: O(k³).
 * @example
 *   markovHomogeneity([[[2, 0], [0, 2]], [[1, 1], [1, 1]]]).degreesOfFreedom; // 2
 */
export function markovHomogeneity(conditional: readonly (readonly (readonly number[])[])[]): MarkovHomogeneity {
  const k = conditional.length;
  if (k < 2 || conditional.some((table) => table.length !== k || table.some((row) => row.length !== k))) {
    throw new Error(`Spatial Markov: the conditional counts must be k × k × k with k ≥ 2; got ${k} lag classes of other shapes.`);
  }
  const labels = Array.from({ length: k }, (_, i) => String(i));
  const conditionalCounts = conditional.map((table) => table.map((row) => row.slice()));
  const pooledCounts = labels.map((_, i) => labels.map((__, j) => conditionalCounts.reduce((s, table) => s + table[i][j], 0)));
  const pooledP = rowProportions(pooledCounts);
  let chiSquare = 0;
  let degreesOfFreedom = 0;
  let cells = 0;
  let expectedBelow5 = 0;
  for (let i = 0; i < k; i++) {
    let activeLagClasses = 0;
    let positiveCells = 0;
    for (let j = 0; j < k; j++) if (pooledP[i][j] > 0) positiveCells++;
    for (let l = 0; l < k; l++) {
      const row = conditionalCounts[l][i];
      const rowTotal = row.reduce((s, v) => s + v, 0);
      if (rowTotal === 0) continue;
      activeLagClasses++;
      for (let j = 0; j < k; j++) {
        if (pooledP[i][j] <= 0) continue;
        const difference = row[j] / rowTotal - pooledP[i][j];
        chiSquare += (rowTotal * difference * difference) / pooledP[i][j];
        cells++;
        if (rowTotal * pooledP[i][j] < 5) expectedBelow5++;
      }
    }
    degreesOfFreedom += Math.max(0, activeLagClasses - 1) * Math.max(0, positiveCells - 1);
  }
  return {
    classes: k,
    pooled: { classes: labels, counts: pooledCounts, probabilities: pooledP },
    conditional: conditionalCounts.map((counts) => ({ classes: labels, counts, probabilities: rowProportions(counts) })),
    chiSquare,
    degreesOfFreedom,
    p: degreesOfFreedom > 0 ? chiSquareUpperTail(chiSquare, degreesOfFreedom) : NaN,
    cells,
    expectedBelow5,
  };
}

/** One pair of consecutive periods for {@link spatialMarkovPanel}: values aligned with its own weights. */
export interface SpatialMarkovPair {
  readonly earlier: ArrayLike<number>;
  readonly later: ArrayLike<number>;
  /** Weights over the regions of this pair (row-standardised for the usual lag, the average of the neighbours). */
  readonly weights: SpatialWeights;
}

/** Result of {@link spatialMarkovPanel}. */
export interface SpatialMarkovPanelResult extends MarkovHomogeneity {
  /** Transitions counted: the sum over pairs of their regions. */
  readonly transitions: number;
  /** Regions per pair, in the order given. */
  readonly regionsPerPair: readonly number[];
}

/**
 * Spatial Markov over a panel (Rey 2001): every pair of periods is classed as
 * in {@link spatialMarkov} — k quantile classes of each period's own values
 * (type-7 quantiles at j/k, a value equal to a cut point in the lower class),
 * the lag's class from the quantiles of the earlier period's lags — and the
 * transitions of all pairs are added into one set of conditional tables (the
 * chain is taken as time-homogeneous), which is then tested with
 * {@link markovHomogeneity}. Each pair has its own weights, so a pair can
 * leave out regions missing in either of its periods.
 *
 * @param pairs at least one pair, each with at least 2k regions.
 * @param options classes k (integer 2..20, default 5).
 * @throws Error for no pairs, a bad k, or a pair that {@link spatialMarkov} would refuse (naming the pair's position).
 * Cost: O(Σ (n log n + L) + k³).
 * @example
 *   spatialMarkovPanel([{ earlier: y2010, later: y2011, weights: w }, { earlier: y2011, later: y2012, weights: w }], { classes: 5 }).transitions; // 2n
 */
export function spatialMarkovPanel(pairs: readonly SpatialMarkovPair[], options: { classes?: number } = {}): SpatialMarkovPanelResult {
  const k = checkedClassCount(options.classes);
  if (pairs.length === 0) throw new Error("Spatial Markov over a panel needs at least one pair of periods.");
  const conditionalCounts = emptyConditionalCounts(k);
  const regionsPerPair = pairs.map((pair, index) =>
    addPairTransitions(conditionalCounts, pair.earlier, pair.later, pair.weights, k, `Spatial Markov with ${k} classes (pair ${index + 1} of ${pairs.length})`),
  );
  return { ...markovHomogeneity(conditionalCounts), transitions: regionsPerPair.reduce((s, n) => s + n, 0), regionsPerPair };
}
