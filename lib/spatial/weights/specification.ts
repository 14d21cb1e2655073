/**
 * Weights specifications in the CLI's notation and building weights from one.
 */
import type { Topology } from "topojson-specification";
import type { CoordinateSystem, SpatialWeights } from "../types";

/** A parsed weights rule: `queen`, `rook`, `knn:K`, `band:KM`, `idw:KM:POWER`. */
export type WeightsSpecification =
  | { readonly kind: "queen" }
  | { readonly kind: "rook" }
  | { readonly kind: "knn"; readonly k: number; readonly symmetrise: boolean }
  | { readonly kind: "band"; readonly threshold: number | null }
  | { readonly kind: "idw"; readonly threshold: number | null; readonly power: number };

export function parseWeightsSpecification(text: string): WeightsSpecification {
  void text;
  throw new Error("not implemented yet");
}

/** Options of {@link weightsFromTopology}. */
export interface WeightsFromTopologyOptions {
  readonly object: string;
  readonly idProperty: string;
  readonly coordinates?: CoordinateSystem;
}

export function weightsFromTopology(topology: Topology, specification: WeightsSpecification | string, options: WeightsFromTopologyOptions): SpatialWeights {
  void topology;
  void specification;
  void options;
  throw new Error("not implemented yet");
}
