/**
 * Distance-based weights on region points (centroids): k nearest neighbours,
 * distance band and inverse distance.
 */
import type { CoordinateSystem, RegionPoints, SpatialWeights } from "../types";

/** Options of {@link nearestNeighbourWeights}. */
export interface NearestNeighbourOptions {
  /** k ≥ 1, k < n. */
  readonly k: number;
  /** Make the relation symmetric: j ∈ N(i) or i ∈ N(j) ⇒ both links. Default false. */
  readonly symmetrise?: boolean;
}

/** Options of {@link distanceBandWeights}. */
export interface DistanceBandOptions {
  /** Band upper limit in km (great-circle) or coordinate units (planar); default: {@link smallestConnectingBand}. */
  readonly threshold?: number;
}

/** Options of {@link inverseDistanceWeights}. */
export interface InverseDistanceOptions extends DistanceBandOptions {
  /** Power α in w_ij = d_ij^(−α); > 0; default 1. */
  readonly power?: number;
}

export function detectCoordinateSystem(x: ArrayLike<number>, y: ArrayLike<number>): CoordinateSystem {
  void x;
  void y;
  throw new Error("not implemented yet");
}
export function greatCircleDistance(longitude1: number, latitude1: number, longitude2: number, latitude2: number): number {
  void longitude1;
  void latitude1;
  void longitude2;
  void latitude2;
  throw new Error("not implemented yet");
}
export function pointDistance(points: RegionPoints, i: number, j: number): number {
  void points;
  void i;
  void j;
  throw new Error("not implemented yet");
}
export function nearestNeighbourWeights(points: RegionPoints, options: NearestNeighbourOptions): SpatialWeights {
  void points;
  void options;
  throw new Error("not implemented yet");
}
export function smallestConnectingBand(points: RegionPoints): number {
  void points;
  throw new Error("not implemented yet");
}
export function distanceBandWeights(points: RegionPoints, options: DistanceBandOptions = {}): SpatialWeights {
  void points;
  void options;
  throw new Error("not implemented yet");
}
export function inverseDistanceWeights(points: RegionPoints, options: InverseDistanceOptions = {}): SpatialWeights {
  void points;
  void options;
  throw new Error("not implemented yet");
}
