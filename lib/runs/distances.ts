/**
 * How distance-based weights measure distance, in words for the screens. The
 * engine reads boundaries whose coordinates all lie within ±180 × ±90 as
 * longitude/latitude (great-circle distances on a sphere) and any others as
 * projected (planar distances in the file's units); see
 * lib/spatial/weights/distance.ts. Pure; safe for client bundles.
 */
import type { CoordinateSystem } from "@/lib/spatial";

export type DistanceMeasure = "great-circle" | "planar";

/** Whether a weights rule measures distances (k nearest neighbours, distance bands, inverse distance); contiguity does not. */
export function ruleMeasuresDistance(rule: string): boolean {
  return /^(knn|band|idw)(:|$)/.test(rule);
}

/** The measure the engine uses for boundaries in this coordinate system. */
export function distanceMeasureOf(system: CoordinateSystem): DistanceMeasure {
  return system === "geographic" ? "great-circle" : "planar";
}

/** One sentence on how nearest-neighbour and band rules measured distance. */
export function distanceSentence(measure: DistanceMeasure): string {
  return measure === "great-circle"
    ? "The nearest-neighbour and band rules measure great-circle distances between region centroids on a sphere of radius 6,371 km, because these boundaries are in longitude and latitude; software that measures on the ellipsoid instead can rank two almost equally distant neighbours the other way."
    : "The nearest-neighbour and band rules measure straight-line (planar) distances between region centroids in the boundary file's own units, because these boundaries are projected.";
}
