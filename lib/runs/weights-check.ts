/**
 * Whether a run's weights rule can serve its boundary version. Checked when a
 * run is asked for, before anything is stored or queued: a rule that cannot be
 * built (k nearest neighbours with k ≥ n) or that links nothing (a band
 * narrower than any distance between regions) would otherwise become a run
 * whose every piece fails or whose every period is "not computed". Pure: the
 * caller builds the weights.
 */
import type { SpatialWeights } from "@/lib/spatial";
import { MINIMUM_REGIONS } from "./compute";
import type { ResolvedRunParams } from "./schemas";

export interface WeightsCheckInput {
  rule: string;
  islandPolicy: ResolvedRunParams["islandPolicy"];
  /** Regions of the boundary version. */
  regionCount: number;
  /** How the boundary version is named in messages, e.g. `boundaries "Veldmark districts" v2`. */
  boundary: string;
  /** Builds the weights; may throw with the engine's reason. */
  build: () => SpatialWeights;
}

function hint(rule: string, regionCount: number): string {
  const kind = rule.trim().toLowerCase().split(":")[0];
  if (kind === "knn") return regionCount > 1 ? ` Choose k from 1 to ${regionCount - 1}.` : "";
  if (kind === "band") return " Choose a wider band, or band:auto for the smallest band that gives every region a neighbour.";
  return "";
}

function messageOf(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

/** The reason the rule cannot serve the boundary version (naming the rule and the number of regions), or null when it can. */
export function weightsProblem(input: WeightsCheckInput): string | null {
  const { rule, regionCount: n, boundary } = input;
  const regions = `${n.toLocaleString("en")} region${n === 1 ? "" : "s"}`;
  let weights: SpatialWeights;
  try {
    weights = input.build();
  } catch (error) {
    return `The weights rule "${rule}" cannot be built for the ${regions} of ${boundary}: ${messageOf(error)}${hint(rule, n)}`;
  }
  let linked = 0;
  for (let i = 0; i < weights.ids.length; i++) if (weights.offsets[i + 1] > weights.offsets[i]) linked++;
  if (linked === 0) {
    return `The weights rule "${rule}" links none of the ${regions} of ${boundary}, so no region has a neighbour and nothing can be computed.${hint(rule, n)}`;
  }
  // Excluded islands leave only the linked regions; the global statistics need MINIMUM_REGIONS of them.
  if (input.islandPolicy === "exclude" && linked < MINIMUM_REGIONS) {
    return (
      `The weights rule "${rule}" gives only ${linked} of the ${regions} of ${boundary} a neighbour; with regions without neighbours excluded, ` +
      `the statistics need at least ${MINIMUM_REGIONS}.${hint(rule, n)}`
    );
  }
  return null;
}
