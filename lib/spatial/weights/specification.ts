/**
 * Weights rules in the CLI's notation (`queen`, `rook`, `knn:K`, `band:KM`,
 * `idw:KM:POWER`) and building weights from a topology with one.
 */
import type { Topology } from "topojson-specification";
import type { CoordinateSystem, SpatialWeights } from "../types";
import { contiguityWeights, regionCentroids } from "./topology";
import { distanceBandWeights, inverseDistanceWeights, nearestNeighbourWeights } from "./distance";

/** A parsed weights rule. A `null` threshold means the smallest connecting band. */
export type WeightsSpecification =
  | { readonly kind: "queen" }
  | { readonly kind: "rook" }
  | { readonly kind: "knn"; readonly k: number; readonly symmetrise: boolean }
  | { readonly kind: "band"; readonly threshold: number | null }
  | { readonly kind: "idw"; readonly threshold: number | null; readonly power: number };

/**
 * Parses a weights rule: `queen`, `rook`, `knn:K` (optionally
 * `knn:K:symmetric`), `band:KM` (or `band` / `band:auto` for the smallest
 * band that gives every region a neighbour), `idw:KM:POWER` (`KM` may be
 * `auto`; POWER defaults to 1 when omitted).
 *
 * @throws Error with the accepted forms when the text matches none of them.
 * Cost: O(length of text).
 * @example
 *   parseWeightsSpecification("knn:6"); // { kind: "knn", k: 6, symmetrise: false }
 *   parseWeightsSpecification("idw:50:2"); // { kind: "idw", threshold: 50, power: 2 }
 */
export function parseWeightsSpecification(text: string): WeightsSpecification {
  const parts = text.trim().toLowerCase().split(":");
  const fail = (): never => {
    throw new Error(
      `Unknown weights rule "${text}"; use queen, rook, knn:K, band:KM (or band:auto) or idw:KM:POWER (KM may be auto).`,
    );
  };
  const positive = (s: string | undefined): number | null => {
    if (s === undefined || s === "" || s === "auto") return null;
    const v = Number(s);
    if (!Number.isFinite(v) || v <= 0) fail();
    return v;
  };
  switch (parts[0]) {
    case "queen":
    case "rook":
      if (parts.length !== 1) fail();
      return { kind: parts[0] };
    case "knn": {
      const k = Number(parts[1]);
      if (parts.length < 2 || parts.length > 3 || !Number.isInteger(k) || k < 1) fail();
      if (parts.length === 3 && parts[2] !== "symmetric") fail();
      return { kind: "knn", k, symmetrise: parts[2] === "symmetric" };
    }
    case "band":
      if (parts.length > 2) fail();
      return { kind: "band", threshold: positive(parts[1]) };
    case "idw": {
      if (parts.length > 3) fail();
      const power = positive(parts[2]) ?? 1;
      return { kind: "idw", threshold: positive(parts[1]), power };
    }
    default:
      return fail();
  }
}

/** Options of {@link weightsFromTopology}. */
export interface WeightsFromTopologyOptions {
  /** Object name in the topology. */
  readonly object: string;
  /** Property holding the region id. */
  readonly idProperty: string;
  /** Coordinate system for distance rules; omitted = detected from the bounding box. */
  readonly coordinates?: CoordinateSystem;
}

/**
 * Builds (untransformed) weights from a topology and a rule: contiguity
 * rules use the arcs, distance rules use the region centroids
 * ({@link regionCentroids}). Transform them afterwards (or through
 * `prepareAnalysis`).
 *
 * @param specification a parsed rule or its text form (see {@link parseWeightsSpecification}).
 * @throws Error as the underlying constructors.
 * Cost: O(V) for contiguity, O(n²) for distance rules.
 * @example
 *   weightsFromTopology(topology, "knn:4", { object: "districts", idProperty: "code", coordinates: "planar" });
 */
export function weightsFromTopology(
  topology: Topology,
  specification: WeightsSpecification | string,
  options: WeightsFromTopologyOptions,
): SpatialWeights {
  const spec = typeof specification === "string" ? parseWeightsSpecification(specification) : specification;
  if (spec.kind === "queen" || spec.kind === "rook") {
    return contiguityWeights(topology, { object: options.object, idProperty: options.idProperty, rule: spec.kind });
  }
  const points = regionCentroids(topology, options);
  if (spec.kind === "knn") return nearestNeighbourWeights(points, { k: spec.k, symmetrise: spec.symmetrise });
  if (spec.kind === "band") return distanceBandWeights(points, { threshold: spec.threshold ?? undefined });
  return inverseDistanceWeights(points, { threshold: spec.threshold ?? undefined, power: spec.power });
}
