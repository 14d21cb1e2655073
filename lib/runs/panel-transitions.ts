/**
 * Transitions over a run's whole panel: the spatial Markov tables (Rey 2001)
 * of one indicator, every period to the next, with the test of homogeneity.
 * Pure: the caller loads the values and the run's geometry.
 *
 * Each pair of consecutive periods uses the regions with a value in both
 * (a region missing in either period drops out of that pair only, and is
 * counted), the run's weights restricted to them and row-standardised (the
 * lag is the average of the neighbours whatever transform the run used).
 * Regions without a neighbour have no neighbours' class: they are left out
 * and counted, unless the run attaches islands to their nearest region.
 */
import { prepareAnalysis, spatialMarkovPanel, type SpatialMarkovPair } from "@/lib/spatial";
import { messageOf, type RunGeometry } from "./compute";
import type { ResolvedRunParams } from "./schemas";

/** Default number of quantile classes (quintiles). */
export const PANEL_TRANSITION_CLASSES = 5;

export interface PanelTransitionPair {
  earlier: string;
  later: string;
  /** Regions counted in this pair (0 when the pair was skipped). */
  regions: number;
  /** Regions without a value in the earlier or the later period. */
  missing: number;
  /** Regions left out because they have no neighbour with a value in both periods. */
  noNeighbours: number;
  /** Why the pair is not counted, or null when it is. */
  skipped: string | null;
}

export interface PanelTransitions {
  indicator: string;
  /** k: quantile classes 0 … k−1, low to high, of each period's own values. */
  classes: number;
  /** The run's periods, in time order. */
  periods: string[];
  pairs: PanelTransitionPair[];
  /** Transitions counted (region × pair). */
  transitions: number;
  /** Region-pairs dropped because the region had no value in one of the two periods. */
  droppedMissing: number;
  /** Region-pairs left out because the region had no neighbour. */
  droppedNoNeighbours: number;
  /** pooled[i][j]: moves from class i to class j, all neighbours' classes together. */
  pooled: number[][];
  /** conditional[l][i][j]: the same for regions whose neighbours were in class l in the earlier period. */
  conditional: number[][][];
  test: { chiSquare: number; degreesOfFreedom: number; p: number | null; cells: number; expectedBelow5: number } | null;
  /** Why nothing (or no test) could be computed. */
  note: string | null;
}

type TransitionParams = Pick<ResolvedRunParams, "periods" | "islandPolicy">;

/**
 * The panel's spatial Markov tables for one indicator.
 *
 * @param byPeriod the indicator's values per period key, by region code (null = missing).
 * @param classes k, 2..20 (the screen offers 3, 4 and 5).
 * Never throws for data: pairs that cannot be classed are skipped with a reason.
 */
export function panelTransitions(
  geometry: RunGeometry,
  params: TransitionParams,
  indicator: string,
  byPeriod: ReadonlyMap<string, ReadonlyMap<string, number | null>>,
  classes: number = PANEL_TRANSITION_CLASSES,
): PanelTransitions {
  const periods = params.periods.slice();
  const pairs: PanelTransitionPair[] = [];
  const engineInput: SpatialMarkovPair[] = [];
  const islandPolicy = params.islandPolicy === "attach" ? "attach" : "exclude";
  for (let t = 0; t + 1 < periods.length; t++) {
    const earlier = periods[t];
    const later = periods[t + 1];
    const a = byPeriod.get(earlier);
    const b = byPeriod.get(later);
    const both = new Map<string, number | null>();
    for (const id of geometry.baseWeights.ids) {
      const x = a?.get(id);
      const y = b?.get(id);
      both.set(id, isFiniteNumber(x) && isFiniteNumber(y) ? x : null);
    }
    const prepared = prepareAnalysis(geometry.baseWeights, both, { islandPolicy, transform: "row-standardised", points: geometry.points });
    const counts = prepared.report.droppedCounts;
    const pair: PanelTransitionPair = {
      earlier,
      later,
      regions: prepared.ids.length,
      missing: counts.missing + counts["not-a-number"],
      noNeighbours: counts["island-excluded"],
      skipped: null,
    };
    if (prepared.ids.length < 2 * classes) {
      pair.skipped = `only ${prepared.ids.length} regions can be classed; ${classes} classes need at least ${2 * classes}`;
      pair.regions = 0;
    } else {
      engineInput.push({ earlier: prepared.values, later: prepared.ids.map((id) => b?.get(id) as number), weights: prepared.weights });
    }
    pairs.push(pair);
  }
  const k = classes;
  const zeros = () => Array.from({ length: k }, () => new Array<number>(k).fill(0));
  const result: PanelTransitions = {
    indicator,
    classes: k,
    periods,
    pairs,
    transitions: 0,
    droppedMissing: pairs.reduce((s, p) => s + p.missing, 0),
    droppedNoNeighbours: pairs.reduce((s, p) => s + p.noNeighbours, 0),
    pooled: zeros(),
    conditional: Array.from({ length: k }, zeros),
    test: null,
    note: null,
  };
  if (periods.length < 2) return { ...result, note: "The run has one period: transitions need at least two." };
  if (engineInput.length === 0) return { ...result, note: "No pair of consecutive periods has enough regions to class." };
  try {
    const markov = spatialMarkovPanel(engineInput, { classes: k });
    result.transitions = markov.transitions;
    result.pooled = markov.pooled.counts.map((row) => row.slice());
    result.conditional = markov.conditional.map((table) => table.counts.map((row) => row.slice()));
    result.test =
      markov.degreesOfFreedom > 0
        ? { chiSquare: markov.chiSquare, degreesOfFreedom: markov.degreesOfFreedom, p: markov.p, cells: markov.cells, expectedBelow5: markov.expectedBelow5 }
        : null;
    if (!result.test) result.note = "No test of homogeneity: no class was reached from more than one neighbours' class with more than one outcome.";
  } catch (error) {
    result.note = `The transitions could not be computed: ${messageOf(error)}`;
  }
  return result;
}

function isFiniteNumber(v: unknown): v is number {
  return typeof v === "number" && Number.isFinite(v);
}
