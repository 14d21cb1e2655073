/**
 * Comparison of two periods and the robustness strip — pure, computed on
 * demand from the run's stored parameters (same seed, so repeatable).
 */
import type { Topology } from "topojson-specification";
import {
  bivariateMoran,
  chiSquareIndependence,
  CLUSTER_CLASSES,
  createRandomSource,
  globalMoran,
  moranOfChange,
  pairedMoranChangeTest,
  prepareAnalysis,
  regionCentroids,
  transitionTable,
  type ClusterClass,
  type IndependenceTest,
  type RegionValues,
} from "@/lib/spatial";
import { buildRunGeometry, messageOf, rateValuesOf, standardisePrepared, statisticSeed, type RateInputs, type RunGeometry, type TopologyLayout } from "./compute";
import { distanceMeasureOf, ruleMeasuresDistance, type DistanceMeasure } from "./distances";
import type { ResolvedRunParams } from "./schemas";
import type { LocalFields } from "./types";

export interface PeriodComparison {
  earlier: string;
  later: string;
  /** n regions with a value in both periods (after the island policy when the paired test ran). */
  n: number;
  change: {
    /** Always later − earlier: a positive value is a rise. */
    direction: "later-minus-earlier";
    I: number | null;
    expectedI: number | null;
    pseudoP: number | null;
    zRandomisation: number | null;
    note: string | null;
    /** Summary of the change values themselves. */
    rising: number;
    falling: number;
  };
  pairedChange: { earlierI: number; laterI: number; difference: number; pseudoP: number | null; note: string | null } | null;
  bivariate: { I: number | null; pseudoP: number | null; permutationMean: number | null; inSituCorrelation: number | null; note: string | null };
}

type CompareParams = Pick<ResolvedRunParams, "islandPolicy" | "transform" | "permutations" | "seed">;

/**
 * I of the change (later − earlier), the paired permutation test of the
 * change in I (common random numbers), and the bivariate Moran of the later
 * period against the spatial lag of the earlier one.
 */
export function comparePeriods(
  geometry: RunGeometry,
  params: CompareParams,
  earlierKey: string,
  laterKey: string,
  earlier: RegionValues,
  later: RegionValues,
): PeriodComparison {
  const options = {
    islandPolicy: params.islandPolicy,
    transform: params.transform,
    points: geometry.points,
    permutations: params.permutations,
    seed: statisticSeed(params.seed, "moran"),
  };
  let n = 0;
  let rising = 0;
  let falling = 0;
  const get = (values: RegionValues, id: string, i: number): number | null => {
    const v = values instanceof Map ? values.get(id) : Array.isArray(values) ? values[i] : (values as Record<string, number | null | undefined>)[id];
    return typeof v === "number" && Number.isFinite(v) ? v : null;
  };
  geometry.baseWeights.ids.forEach((id, i) => {
    const a = get(earlier, id, i);
    const b = get(later, id, i);
    if (a === null || b === null) return;
    n++;
    if (b > a) rising++;
    else if (b < a) falling++;
  });

  const change: PeriodComparison["change"] = { direction: "later-minus-earlier", I: null, expectedI: null, pseudoP: null, zRandomisation: null, note: null, rising, falling };
  try {
    const result = moranOfChange(geometry.baseWeights, earlier, later, options).result;
    change.I = result.I;
    change.expectedI = result.expectedI;
    change.pseudoP = result.permutation?.pTwoSided ?? null;
    change.zRandomisation = result.randomisation.z;
  } catch (error) {
    change.note = `Moran's I of the change could not be computed: ${messageOf(error)}`;
  }

  let pairedChange: PeriodComparison["pairedChange"] = null;
  try {
    const test = pairedMoranChangeTest(geometry.baseWeights, earlier, later, options);
    n = test.n; // after the island policy, as in every other statistic here
    pairedChange = { earlierI: test.earlierI, laterI: test.laterI, difference: test.change, pseudoP: test.permutation?.pTwoSided ?? null, note: null };
  } catch (error) {
    pairedChange = { earlierI: NaN, laterI: NaN, difference: NaN, pseudoP: null, note: `The paired test could not be computed: ${messageOf(error)}` };
  }

  const bivariate: PeriodComparison["bivariate"] = { I: null, pseudoP: null, permutationMean: null, inSituCorrelation: null, note: null };
  try {
    // Regions with a value in both periods, prepared once; x = later, y = earlier.
    const both = new Map<string, number | null>();
    geometry.baseWeights.ids.forEach((id, i) => {
      const a = get(earlier, id, i);
      const b = get(later, id, i);
      both.set(id, a !== null && b !== null ? b : null);
    });
    const prepared = prepareAnalysis(geometry.baseWeights, both, { islandPolicy: params.islandPolicy, transform: params.transform, points: geometry.points });
    const index = new Map(geometry.baseWeights.ids.map((id, i) => [id, i]));
    const y = prepared.ids.map((id) => get(earlier, id, index.get(id) as number) as number);
    const result = bivariateMoran(prepared.values, y, prepared.weights, {
      permutations: params.permutations,
      random: createRandomSource(statisticSeed(params.seed, "moran")),
    });
    bivariate.I = result.I;
    bivariate.pseudoP = result.permutation?.pTwoSided ?? null;
    bivariate.permutationMean = result.permutation?.mean ?? null;
    bivariate.inSituCorrelation = result.inSituCorrelation;
  } catch (error) {
    bivariate.note = `The bivariate Moran's I could not be computed: ${messageOf(error)}`;
  }
  return { earlier: earlierKey, later: laterKey, n, change, pairedChange, bivariate };
}

export interface ClusterTransitionTable {
  classes: ClusterClass[];
  /** counts[a][b]: regions in class a in the earlier period and b in the later. */
  counts: number[][];
  /** Regions in only one of the two periods. */
  unmatched: number;
  /** Regions whose class changed. */
  moved: number;
  /**
   * Pearson's chi-square test that the later class is independent of the
   * earlier one (null when fewer than two classes are occupied). Neighbouring
   * regions are not independent observations, so its p is optimistic: the
   * screen says so.
   */
  independence: IndependenceTest | null;
}

/** How many regions moved between cluster classes from one stored local result to another. */
export function clusterTransitionTable(earlier: LocalFields, later: LocalFields): ClusterTransitionTable {
  const laterById = new Map(later.ids.map((id, i) => [id, later.cluster[i]]));
  const from: ClusterClass[] = [];
  const to: ClusterClass[] = [];
  earlier.ids.forEach((id, i) => {
    const c = laterById.get(id);
    if (c === undefined) return;
    from.push(earlier.cluster[i]);
    to.push(c);
  });
  const table = transitionTable(CLUSTER_CLASSES, from, to);
  let moved = 0;
  for (let k = 0; k < from.length; k++) if (from[k] !== to[k]) moved++;
  return {
    classes: [...CLUSTER_CLASSES],
    counts: table.counts.map((row) => [...row]),
    unmatched: earlier.ids.length - from.length + (later.ids.length - from.length),
    moved,
    independence: chiSquareIndependence(table.counts),
  };
}

export const ROBUSTNESS_RULES = ["queen", "rook", "knn:4", "knn:6", "knn:8", "band"] as const;

export interface RobustnessEntry {
  rule: string;
  /**
   * How the rule measured distances between region centroids: great-circle
   * on the sphere for longitude/latitude boundaries, planar in the file's
   * units for projected ones; null for contiguity rules, which measure none.
   */
  distances: DistanceMeasure | null;
  n: number | null;
  meanNeighbours: number | null;
  I: number | null;
  expectedI: number | null;
  pseudoP: number | null;
  bandLow: number | null;
  bandHigh: number | null;
  note: string | null;
}

/**
 * Moran's I of one indicator-period under each weights rule of the strip,
 * with the run's transform, island policy, permutations and seed.
 */
export function robustnessStrip(topology: Topology, layout: TopologyLayout, params: CompareParams, values: RegionValues, rate?: RateInputs): RobustnessEntry[] {
  let system: DistanceMeasure | null = null;
  try {
    // Detected as weightsFromTopology detects it for knn and band weights (bounding box of the decoded coordinates).
    system = distanceMeasureOf(regionCentroids(topology, { object: layout.object, idProperty: layout.idProperty }).coordinates);
  } catch {
    // A rule that needs centroids reports its own error below.
  }
  return ROBUSTNESS_RULES.map((rule) => {
    const distances = ruleMeasuresDistance(rule) ? system : null;
    try {
      const geometry = buildRunGeometry(topology, layout, { weights: rule, islandPolicy: params.islandPolicy });
      const analysed = prepareAnalysis(geometry.baseWeights, rate ? rateValuesOf(geometry.baseWeights.ids, rate) : values, {
        islandPolicy: params.islandPolicy,
        transform: params.transform,
        points: geometry.points,
      });
      // A run that standardised this rate is checked on the same standardised values, over the regions each rule keeps.
      const prepared = rate ? standardisePrepared(analysed, rate).prepared : analysed;
      const result = globalMoran(prepared.values, prepared.weights, {
        permutations: params.permutations,
        random: createRandomSource(statisticSeed(params.seed, "moran")),
      });
      return {
        rule,
        distances,
        n: result.n,
        meanNeighbours: prepared.weights.neighbours.length / Math.max(1, prepared.ids.length),
        I: result.I,
        expectedI: result.expectedI,
        pseudoP: result.permutation?.pTwoSided ?? null,
        bandLow: result.permutation?.band[0] ?? null,
        bandHigh: result.permutation?.band[1] ?? null,
        note: prepared.report.islands.length ? `${prepared.report.islands.length} region(s) without neighbours (policy "${params.islandPolicy}").` : null,
      };
    } catch (error) {
      return { rule, distances, n: null, meanNeighbours: null, I: null, expectedI: null, pseudoP: null, bandLow: null, bandHigh: null, note: messageOf(error) };
    }
  });
}
