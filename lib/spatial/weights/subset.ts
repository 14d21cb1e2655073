/**
 * Restricting weights to a subset of regions and applying an island policy.
 */
import type { IslandPolicy, RegionPoints, SpatialWeights } from "../types";

/** Result of {@link applyIslandPolicy}. */
export interface IslandPolicyResult {
  readonly weights: SpatialWeights;
  readonly policy: IslandPolicy;
  /** Ids of the regions that had no neighbour before the policy was applied. */
  readonly islands: readonly string[];
  /** Under `"attach"`: each island and the region it was linked to. */
  readonly attached: readonly { readonly id: string; readonly neighbour: string }[];
  /** Under `"exclude"`: the islands removed (same as `islands`); else empty. */
  readonly excluded: readonly string[];
}

export function restrictWeights(weights: SpatialWeights, keep: ArrayLike<boolean>): SpatialWeights {
  void weights;
  void keep;
  throw new Error("not implemented yet");
}
export function applyIslandPolicy(weights: SpatialWeights, policy: IslandPolicy, points?: RegionPoints): IslandPolicyResult {
  void weights;
  void policy;
  void points;
  throw new Error("not implemented yet");
}
