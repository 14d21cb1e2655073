import { readFileSync } from "node:fs";
import type { Topology } from "topojson-specification";
import { weightsFromTopology, type SpatialWeights } from "@/lib/spatial";
import { NC_TOPOLOGY } from "../../fixtures/nc-sids/fixture";

/**
 * The engine's queen contiguity of the committed North Carolina counties, and
 * `aligned`, which puts an array that follows the fixture's `ids` (as the R
 * scripts write them) into the weights' row order.
 */
export function ncQueen(ids: readonly (number | string)[]): { queen: SpatialWeights; aligned: <T>(values: readonly T[]) => T[] } {
  const topology = JSON.parse(readFileSync(NC_TOPOLOGY, "utf8")) as Topology;
  const queen = weightsFromTopology(topology, "queen", { object: "nc", idProperty: "FIPSNO" });
  const position = new Map(ids.map((id, k) => [String(id), k]));
  const order = queen.ids.map((id) => {
    const k = position.get(id);
    if (k === undefined) throw new Error(`county ${id} is not in the fixture`);
    return k;
  });
  return { queen, aligned: <T>(values: readonly T[]): T[] => order.map((k) => values[k]) };
}
