/**
 * Panels: Moran's I for every period with common random numbers, Moran's I of
 * the change between two periods, and a paired permutation test of the change
 * in I.
 *
 * Common random numbers: every period restarts the generator from the same
 * seed, and the permutation kernel consumes random numbers in a way that
 * depends only on n, so periods with the same regions are evaluated on
 * exactly the same R relabellings. Year-to-year differences in the
 * permutation summaries then reflect the data, not Monte Carlo noise. When
 * missing values change n between periods, the draws differ from that point
 * (still valid, just no longer common).
 */
import type { IslandPolicy, PermutationSummary, RegionPoints, SpatialWeights, WeightsTransform } from "./types";
import { globalMoran, type GlobalMoranResult } from "./moran";
import { prepareAnalysis, valueOf, type PreparationReport, type RegionValues } from "./prepare";
import { checkPermutationCount, createRandomSource } from "./random";
import { summarisePermutations } from "./permutation";

/** One period of a panel. */
export interface PanelPeriod {
  /** Label shown with the result, e.g. "2013". */
  readonly label: string;
  readonly values: RegionValues;
}

/** Options shared by the panel functions. */
export interface PanelOptions {
  readonly islandPolicy: IslandPolicy;
  readonly transform: WeightsTransform;
  /** Region points, needed only for the "attach" island policy. */
  readonly points?: RegionPoints;
  /** R, 0 or 99..99,999. */
  readonly permutations: number;
  /** Integer seed; every period restarts the generator from it (common random numbers). */
  readonly seed: number;
}

/** One period of a {@link moranPanel} result. */
export interface PanelPeriodResult {
  readonly label: string;
  readonly preparation: PreparationReport;
  readonly result: GlobalMoranResult;
}

/** Result of {@link moranPanel}. */
export interface MoranPanelResult {
  readonly seed: number;
  readonly permutations: number;
  readonly periods: readonly PanelPeriodResult[];
}

/** Result of {@link pairedMoranChangeTest}. */
export interface MoranChangeTestResult {
  /** Regions with a value in both periods. */
  readonly n: number;
  readonly earlierI: number;
  readonly laterI: number;
  /** later I − earlier I (positive: clustering strengthened). */
  readonly change: number;
  /** Permutation distribution of the change under joint relabelling, or null when R = 0. */
  readonly permutation: PermutationSummary | null;
  readonly preparation: PreparationReport;
}

/** Result of {@link moranOfChange}. */
export interface MoranOfChangeResult {
  /** Always `"later-minus-earlier"`: the variable analysed is y_later − y_earlier. */
  readonly direction: "later-minus-earlier";
  readonly preparation: PreparationReport;
  readonly result: GlobalMoranResult;
}

function checkSeed(seed: number): void {
  if (!Number.isInteger(seed)) throw new Error(`The seed must be an integer; got ${String(seed)}.`);
}

/**
 * Global Moran's I for every period of a panel over the same base weights,
 * each period prepared separately (its own missing values, restriction,
 * islands, re-standardisation) and permuted with the same seed (common random
 * numbers, see the module comment).
 *
 * @param baseWeights weights over all regions (binary or untransformed).
 * @param periods labelled values per period.
 * @throws Error for a non-integer seed, bad R, or as {@link prepareAnalysis} and {@link globalMoran} (naming the period).
 * Cost: O(T · R · (n + L)) for T periods.
 * @example
 *   moranPanel(queen, [{ label: "2019", values: y2019 }, { label: "2020", values: y2020 }],
 *     { islandPolicy: "keep", transform: "row-standardised", permutations: 999, seed: 11 });
 */
export function moranPanel(baseWeights: SpatialWeights, periods: readonly PanelPeriod[], options: PanelOptions): MoranPanelResult {
  checkSeed(options.seed);
  const permutations = checkPermutationCount(options.permutations);
  const results = periods.map((period) => {
    try {
      const prepared = prepareAnalysis(baseWeights, period.values, options);
      const result = globalMoran(prepared.values, prepared.weights, {
        permutations,
        random: createRandomSource(options.seed),
      });
      return { label: period.label, preparation: prepared.report, result };
    } catch (error) {
      throw new Error(`Period "${period.label}": ${(error as Error).message}`);
    }
  });
  return { seed: options.seed, permutations, periods: results };
}

/** Values aligned with the base weights: earlier/later where both are finite numbers, else null. */
function pairedValues(baseWeights: SpatialWeights, earlier: RegionValues, later: RegionValues): { first: (number | null)[]; second: (number | null)[] } {
  const first: (number | null)[] = [];
  const second: (number | null)[] = [];
  baseWeights.ids.forEach((id, i) => {
    const a = valueOf(earlier, id, i);
    const b = valueOf(later, id, i);
    const ok = typeof a === "number" && Number.isFinite(a) && typeof b === "number" && Number.isFinite(b);
    first.push(ok ? (a as number) : null);
    second.push(ok ? (b as number) : null);
  });
  return { first, second };
}

/**
 * Paired permutation test of the change in Moran's I between two periods.
 *
 * Only regions with a value in both periods are used (one weights object,
 * prepared once). Each of the R relabellings is applied to BOTH periods (the
 * same permutation of regions, via the same seed), giving R paired values
 * ΔI_r = I_later,r − I_earlier,r; the observed ΔI = I_later − I_earlier is
 * compared with them using the usual (M + 1)/(R + 1) convention.
 *
 * Null hypothesis: the regions are exchangeable in both periods jointly (no
 * spatial pattern in either). A small p says the change is larger than the
 * spread of ΔI that random maps would produce — it is a calibration of the
 * size of the change, not a test of "equal, non-zero clustering in both
 * years"; report it beside both I values and their own tests.
 *
 * @throws Error for a non-integer seed, bad R, or as {@link globalMoran}.
 * Cost: O(R · (n + L)).
 * @example
 *   pairedMoranChangeTest(queen, y2012, y2014, { islandPolicy: "keep",
 *     transform: "row-standardised", permutations: 999, seed: 5 }).permutation?.pTwoSided;
 */
export function pairedMoranChangeTest(
  baseWeights: SpatialWeights,
  earlier: RegionValues,
  later: RegionValues,
  options: PanelOptions,
): MoranChangeTestResult {
  checkSeed(options.seed);
  const permutations = checkPermutationCount(options.permutations);
  const { first, second } = pairedValues(baseWeights, earlier, later);
  const prepared = prepareAnalysis(baseWeights, first, options);
  const index = new Map<string, number>();
  baseWeights.ids.forEach((id, i) => index.set(id, i));
  const laterValues = prepared.ids.map((id) => second[index.get(id) as number] as number);
  const keep = permutations > 0;
  const a = globalMoran(prepared.values, prepared.weights, {
    permutations,
    random: createRandomSource(options.seed),
    keepPermutedValues: keep,
  });
  const b = globalMoran(laterValues, prepared.weights, {
    permutations,
    random: createRandomSource(options.seed),
    keepPermutedValues: keep,
  });
  const change = b.I - a.I;
  let permutation: PermutationSummary | null = null;
  if (keep && a.permutedValues && b.permutedValues) {
    const differences = new Float64Array(permutations);
    for (let r = 0; r < permutations; r++) differences[r] = b.permutedValues[r] - a.permutedValues[r];
    permutation = summarisePermutations(change, differences, 1);
  }
  return { n: prepared.ids.length, earlierI: a.I, laterI: b.I, change, permutation, preparation: prepared.report };
}

/**
 * Moran's I of the change between two periods: the variable analysed is
 * Δy_i = y_later,i − y_earlier,i (so positive I means regions whose value ROSE
 * sit near regions whose value rose, and likewise for falls). Regions missing
 * in either period are dropped and reported.
 *
 * @throws Error for a non-integer seed, bad R, or as {@link globalMoran} (e.g. a constant change).
 * Cost: O(R · (n + L)).
 * @example
 *   moranOfChange(queen, y2012, y2014, { islandPolicy: "keep", transform: "row-standardised",
 *     permutations: 999, seed: 5 }).result.I;
 */
export function moranOfChange(
  baseWeights: SpatialWeights,
  earlier: RegionValues,
  later: RegionValues,
  options: PanelOptions,
): MoranOfChangeResult {
  checkSeed(options.seed);
  const permutations = checkPermutationCount(options.permutations);
  const { first, second } = pairedValues(baseWeights, earlier, later);
  const change = first.map((a, i) => (a === null ? null : (second[i] as number) - a));
  const prepared = prepareAnalysis(baseWeights, change, options);
  const result = globalMoran(prepared.values, prepared.weights, {
    permutations,
    random: createRandomSource(options.seed),
  });
  return { direction: "later-minus-earlier", preparation: prepared.report, result };
}
