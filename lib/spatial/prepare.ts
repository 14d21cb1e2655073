/**
 * Aligning a variable with the weights: missing values, restriction to the
 * regions with a value, island policy and transform — all reported.
 */
import type { IslandPolicy, RegionPoints, SpatialWeights, WeightsTransform } from "./types";

/** Why a region of the weights is not in the analysis. */
export type DropReason = "missing" | "not-a-number" | "island-excluded";

/** What {@link prepareAnalysis} did, to be shown beside every result. */
export interface PreparationReport {
  /** Regions in the base weights. */
  readonly regionsInWeights: number;
  /** Regions in the analysis (n). */
  readonly regionsUsed: number;
  /** Every dropped region with the reason. */
  readonly dropped: readonly { readonly id: string; readonly reason: DropReason }[];
  /** Counts per reason. */
  readonly droppedCounts: Readonly<Record<DropReason, number>>;
  /** Whether the weights were restricted to a subset (and re-standardised if W). */
  readonly restricted: boolean;
  readonly islandPolicy: IslandPolicy;
  /** Regions without neighbours after restriction (before the policy). */
  readonly islands: readonly string[];
  /** Under "attach": each island and the region it was linked to. */
  readonly attached: readonly { readonly id: string; readonly neighbour: string }[];
  readonly transform: WeightsTransform;
}

/** A variable ready for the statistics: aligned values and weights. */
export interface PreparedAnalysis {
  readonly ids: readonly string[];
  readonly values: Float64Array;
  readonly weights: SpatialWeights;
  readonly report: PreparationReport;
}

/** Options of {@link prepareAnalysis}. */
export interface PrepareOptions {
  readonly islandPolicy: IslandPolicy;
  readonly transform: WeightsTransform;
  /** Region points, needed only for the "attach" island policy. */
  readonly points?: RegionPoints;
}

/** A value per region id: a Map, a plain record, or an array aligned with the weights' ids. */
export type RegionValues =
  | ReadonlyMap<string, number | null | undefined>
  | Readonly<Record<string, number | null | undefined>>
  | ArrayLike<number | null | undefined>;

export function prepareAnalysis(baseWeights: SpatialWeights, values: RegionValues, options: PrepareOptions): PreparedAnalysis {
  void baseWeights;
  void values;
  void options;
  throw new Error("not implemented yet");
}
