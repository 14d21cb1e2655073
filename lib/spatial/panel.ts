/**
 * Panels: Moran's I for every period with common random numbers, Moran's I of
 * the change between two periods, and a paired permutation test of the change
 * in I.
 */
import type { IslandPolicy, PermutationSummary, RegionPoints, SpatialWeights, WeightsTransform } from "./types";
import type { GlobalMoranResult } from "./moran";
import type { PreparationReport, RegionValues } from "./prepare";

/** One period of a panel. */
export interface PanelPeriod {
  readonly label: string;
  readonly values: RegionValues;
}

/** Options shared by the panel functions. */
export interface PanelOptions {
  readonly islandPolicy: IslandPolicy;
  readonly transform: WeightsTransform;
  readonly points?: RegionPoints;
  /** R, 0 or 99..99,999. */
  readonly permutations: number;
  /** Seed; every period restarts the generator from it (common random numbers). */
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
  readonly n: number;
  readonly earlierI: number;
  readonly laterI: number;
  /** later I − earlier I. */
  readonly change: number;
  readonly permutation: PermutationSummary | null;
  readonly preparation: PreparationReport;
}

/** Result of {@link moranOfChange}. */
export interface MoranOfChangeResult {
  /** Always `"later-minus-earlier"`: the variable is y_later − y_earlier. */
  readonly direction: "later-minus-earlier";
  readonly preparation: PreparationReport;
  readonly result: GlobalMoranResult;
}

export function moranPanel(baseWeights: SpatialWeights, periods: readonly PanelPeriod[], options: PanelOptions): MoranPanelResult {
  void baseWeights;
  void periods;
  void options;
  throw new Error("not implemented yet");
}

export function pairedMoranChangeTest(baseWeights: SpatialWeights, earlier: RegionValues, later: RegionValues, options: PanelOptions): MoranChangeTestResult {
  void baseWeights;
  void earlier;
  void later;
  void options;
  throw new Error("not implemented yet");
}

export function moranOfChange(baseWeights: SpatialWeights, earlier: RegionValues, later: RegionValues, options: PanelOptions): MoranOfChangeResult {
  void baseWeights;
  void earlier;
  void later;
  void options;
  throw new Error("not implemented yet");
}
