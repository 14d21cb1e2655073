/**
 * Contiguity weights (rook, queen) and centroids from a TopoJSON topology.
 */
import type { Topology } from "topojson-specification";
import type { CoordinateSystem, RegionPoints, SpatialWeights } from "../types";

/** Which object of the topology holds the regions and which property names them. */
export interface TopologyRegionsOptions {
  /** Name of the object in `topology.objects` (a GeometryCollection). */
  readonly object: string;
  /** Property holding the region id; `"id"` also accepts the geometry's own id. */
  readonly idProperty: string;
}

/** Options of {@link contiguityWeights}. */
export interface ContiguityOptions extends TopologyRegionsOptions {
  /** `"rook"`: neighbours share an arc (a boundary line); `"queen"`: neighbours share at least a vertex. */
  readonly rule: "rook" | "queen";
}

/** Options of {@link regionCentroids}. */
export interface CentroidOptions extends TopologyRegionsOptions {
  /** How to read the coordinates; omitted = detected (see `detectCoordinateSystem`). */
  readonly coordinates?: CoordinateSystem;
}

export function contiguityWeights(topology: Topology, options: ContiguityOptions): SpatialWeights {
  void topology;
  void options;
  throw new Error("contiguityWeights: not implemented yet");
}

export function regionCentroids(topology: Topology, options: CentroidOptions): RegionPoints {
  void topology;
  void options;
  throw new Error("regionCentroids: not implemented yet");
}

export function topologyRegionIds(topology: Topology, options: TopologyRegionsOptions): string[] {
  void topology;
  void options;
  throw new Error("topologyRegionIds: not implemented yet");
}
