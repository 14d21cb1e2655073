/**
 * Aligning one variable with the weights: regions without a usable value are
 * dropped (and counted, never set to zero), the weights are restricted to the
 * regions that remain, the island policy is applied, and finally the
 * transform — so row-standardised weights are re-standardised over the
 * neighbours that have a value. Everything done is reported.
 */
import type { IslandPolicy, RegionPoints, SpatialWeights, WeightsTransform } from "./types";
import { restrictWeights, applyIslandPolicy } from "./weights/subset";
import { transformWeights } from "./weights/transform";

/** Why a region of the weights is not in the analysis. */
export type DropReason = "missing" | "not-a-number" | "island-excluded";

/** What {@link prepareAnalysis} did, to be shown beside every result. */
export interface PreparationReport {
  /** Regions in the base weights. */
  readonly regionsInWeights: number;
  /** Regions in the analysis (n). */
  readonly regionsUsed: number;
  /** Every dropped region with the reason, in weights order. */
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
  /** Ids of the regions in the analysis (= weights.ids). */
  readonly ids: readonly string[];
  /** Values aligned with `ids`, all finite. */
  readonly values: Float64Array;
  /** Restricted, island-handled and transformed weights. */
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

/**
 * A value per region id: a Map or a plain record keyed by id (ids absent from
 * it count as missing), or an array aligned with the weights' ids. `null`,
 * `undefined` and `NaN` are missing; ±Infinity and non-numbers are
 * "not-a-number".
 */
export type RegionValues =
  | ReadonlyMap<string, number | null | undefined>
  | Readonly<Record<string, number | null | undefined>>
  | ArrayLike<number | null | undefined>;

/** The raw value of region `id` (position `index` for aligned arrays); internal helper. */
export function valueOf(values: RegionValues, id: string, index: number): unknown {
  if (values instanceof Map) return values.get(id);
  if (isArrayLike(values)) return values[index];
  return Object.prototype.hasOwnProperty.call(values, id) ? (values as Record<string, unknown>)[id] : undefined;
}

function isArrayLike(values: RegionValues): values is ArrayLike<number | null | undefined> {
  return Array.isArray(values) || ArrayBuffer.isView(values);
}

/**
 * Prepares one variable for analysis over base (untransformed or binary)
 * weights:
 *  1. a region with no value (null, undefined, NaN, absent key) is dropped as
 *     "missing"; a value that is not a finite number as "not-a-number";
 *  2. the weights are restricted to the remaining regions;
 *  3. the island policy is applied to the restricted weights (regions that
 *     lost all their neighbours are islands too); excluded islands are
 *     reported as "island-excluded";
 *  4. the transform is applied (row-standardisation therefore uses only the
 *     neighbours that have a value).
 *
 * Keys of a Map/record that are not region ids are ignored here; callers that
 * must reject them (the CLI) check ids first.
 *
 * @param baseWeights weights over all regions of the boundaries.
 * @param values one value per region (see {@link RegionValues}).
 * @throws Error when an aligned array has the wrong length, or as {@link applyIslandPolicy}.
 * Cost: O(n + L) (plus O(islands · n) for "attach").
 * @example
 *   const prepared = prepareAnalysis(queen, new Map([["a", 1.5], ["b", null]]), {
 *     islandPolicy: "keep", transform: "row-standardised" });
 *   prepared.report.droppedCounts.missing; // 1
 */
export function prepareAnalysis(baseWeights: SpatialWeights, values: RegionValues, options: PrepareOptions): PreparedAnalysis {
  const n = baseWeights.ids.length;
  if (isArrayLike(values) && values.length !== n) {
    throw new Error(`Expected ${n} values (one per region of the weights); got ${values.length}.`);
  }
  const keep: boolean[] = [];
  const dropped: { id: string; reason: DropReason }[] = [];
  const byId = new Map<string, number>();
  for (let i = 0; i < n; i++) {
    const id = baseWeights.ids[i];
    const v = valueOf(values, id, i);
    if (v === null || v === undefined || (typeof v === "number" && Number.isNaN(v))) {
      keep.push(false);
      dropped.push({ id, reason: "missing" });
    } else if (typeof v !== "number" || !Number.isFinite(v)) {
      keep.push(false);
      dropped.push({ id, reason: "not-a-number" });
    } else {
      keep.push(true);
      byId.set(id, v);
    }
  }
  const restricted = dropped.length > 0;
  const subset = restricted ? restrictWeights(baseWeights, keep) : baseWeights;
  const policy = applyIslandPolicy(subset, options.islandPolicy, options.points);
  for (const id of policy.excluded) dropped.push({ id, reason: "island-excluded" });
  const weights = transformWeights(policy.weights, options.transform);
  const aligned = new Float64Array(weights.ids.length);
  weights.ids.forEach((id, i) => {
    aligned[i] = byId.get(id) as number;
  });
  const droppedCounts: Record<DropReason, number> = { missing: 0, "not-a-number": 0, "island-excluded": 0 };
  for (const d of dropped) droppedCounts[d.reason]++;
  return {
    ids: weights.ids,
    values: aligned,
    weights,
    report: {
      regionsInWeights: n,
      regionsUsed: weights.ids.length,
      dropped,
      droppedCounts,
      restricted,
      islandPolicy: options.islandPolicy,
      islands: policy.islands,
      attached: policy.attached,
      transform: options.transform,
    },
  };
}
