/**
 * Distance-based weights on region points (usually centroids): k nearest
 * neighbours, distance band, and inverse distance within a band.
 *
 * Distances are great-circle kilometres for `"geographic"` points
 * (longitude/latitude in degrees, haversine formula on a sphere of radius
 * 6371.0088 km, the mean Earth radius of IUGG) and Euclidean distances in the
 * coordinates' own unit for `"planar"` points (Tessera's planar boundaries are
 * in kilometres). Which one applies is the explicit `coordinates` field of the
 * points; {@link detectCoordinateSystem} is only the documented default used
 * when a caller does not say.
 *
 * All constructions here compare every pair of points: O(n²) time and O(n)
 * extra memory, comfortable up to a few thousand regions.
 */
import type { CoordinateSystem, RegionPoints, SpatialWeights } from "../types";
import { weightsFromNeighbourLists } from "./sparse";

/** Mean Earth radius in km (IUGG). */
export const EARTH_RADIUS_KM = 6371.0088;

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

/**
 * Guesses whether coordinates are longitude/latitude: `"geographic"` when
 * every x lies in [−180, 180] and every y in [−90, 90], else `"planar"`.
 *
 * Caution: small projected data sets (e.g. kilometres from a local origin)
 * can fall inside those ranges and be misread as degrees; callers that know
 * the coordinate system should state it instead of relying on this guess.
 *
 * @throws Error when the arrays are empty, differ in length or hold a non-finite value.
 * Cost: O(n).
 * @example
 *   detectCoordinateSystem([5.1, 6.3], [52.0, 51.2]); // "geographic"
 *   detectCoordinateSystem([0, 420], [0, 310]); // "planar"
 */
export function detectCoordinateSystem(x: ArrayLike<number>, y: ArrayLike<number>): CoordinateSystem {
  if (x.length === 0 || x.length !== y.length) throw new Error("Coordinate detection needs matching, non-empty x and y.");
  let geographic = true;
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) throw new Error(`Coordinate ${i} is not finite.`);
    if (Math.abs(x[i]) > 180 || Math.abs(y[i]) > 90) geographic = false;
  }
  return geographic ? "geographic" : "planar";
}

/**
 * Great-circle distance in km between two longitude/latitude points (degrees),
 * by the haversine formula on a sphere of radius 6371.0088 km:
 *   d = 2R · asin( sqrt( sin²(Δφ/2) + cos φ1 cos φ2 sin²(Δλ/2) ) ).
 *
 * Source: R. W. Sinnott (1984), "Virtues of the Haversine", Sky and Telescope 68(2).
 * Cost: O(1).
 * @example
 *   greatCircleDistance(0, 0, 1, 0); // ≈ 111.195 km
 */
export function greatCircleDistance(longitude1: number, latitude1: number, longitude2: number, latitude2: number): number {
  const toRadians = Math.PI / 180;
  const phi1 = latitude1 * toRadians;
  const phi2 = latitude2 * toRadians;
  const sinHalfPhi = Math.sin((phi2 - phi1) / 2);
  const sinHalfLambda = Math.sin(((longitude2 - longitude1) * toRadians) / 2);
  const h = sinHalfPhi * sinHalfPhi + Math.cos(phi1) * Math.cos(phi2) * sinHalfLambda * sinHalfLambda;
  return 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(h)));
}

/**
 * Distance between points i and j: great-circle km for geographic points,
 * Euclidean for planar ones.
 *
 * Cost: O(1).
 * @example
 *   pointDistance(points, 0, 1);
 */
export function pointDistance(points: RegionPoints, i: number, j: number): number {
  if (points.coordinates === "geographic") return greatCircleDistance(points.x[i], points.y[i], points.x[j], points.y[j]);
  const dx = points.x[i] - points.x[j];
  const dy = points.y[i] - points.y[j];
  return Math.sqrt(dx * dx + dy * dy);
}

function checkPoints(points: RegionPoints, minimum: number, what: string): number {
  const n = points.ids.length;
  if (points.x.length !== n || points.y.length !== n) throw new Error("Region points: ids, x and y must have the same length.");
  if (points.coordinates !== "geographic" && points.coordinates !== "planar") {
    throw new Error(`Region points: coordinates must be "geographic" or "planar"; got "${String(points.coordinates)}".`);
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(points.x[i]) || !Number.isFinite(points.y[i])) {
      throw new Error(`Region "${points.ids[i]}" has no finite coordinates.`);
    }
  }
  if (n < minimum) throw new Error(`${what} needs at least ${minimum} regions; got ${n}.`);
  return n;
}

/** Number as written in a rule label (no trailing noise). */
function label(value: number): string {
  return String(Number(value.toPrecision(12)));
}

/**
 * k-nearest-neighbour weights (binary): each region is linked to the k
 * regions whose points are closest. Ties at the k-th distance are broken by
 * region order (the earlier region wins), so the result is deterministic.
 * The relation is not symmetric in general; `symmetrise` adds the missing
 * reverse links (union), so some regions then have more than k neighbours.
 *
 * @param points region points with an explicit coordinate system.
 * @param options k (integer, 1 ≤ k < n) and symmetrise.
 * @returns binary weights with rule `"knn:K"` (or `"knn:K:symmetric"`).
 * @throws Error for a bad k or invalid points.
 * Cost: O(n² k) time, O(n k) memory.
 * @example
 *   nearestNeighbourWeights(centroids, { k: 6 });
 */
export function nearestNeighbourWeights(points: RegionPoints, options: NearestNeighbourOptions): SpatialWeights {
  const n = checkPoints(points, 2, "k nearest neighbours");
  const k = options.k;
  if (!Number.isInteger(k) || k < 1 || k >= n) {
    throw new Error(`k nearest neighbours needs an integer k from 1 to n − 1 = ${n - 1}; got ${String(k)}.`);
  }
  const bestIndex = new Int32Array(k);
  const bestDistance = new Float64Array(k);
  const lists: number[][] = [];
  for (let i = 0; i < n; i++) {
    let filled = 0;
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const d = pointDistance(points, i, j);
      if (filled === k && d >= bestDistance[k - 1]) continue;
      // insertion into the sorted top-k (strictly smaller distance moves ahead, so ties keep region order)
      let position = filled < k ? filled : k - 1;
      while (position > 0 && bestDistance[position - 1] > d) {
        bestDistance[position] = bestDistance[position - 1];
        bestIndex[position] = bestIndex[position - 1];
        position--;
      }
      bestDistance[position] = d;
      bestIndex[position] = j;
      if (filled < k) filled++;
    }
    lists.push(Array.from(bestIndex));
  }
  if (options.symmetrise) {
    const sets = lists.map((list) => new Set(list));
    for (let i = 0; i < n; i++) for (const j of lists[i]) sets[j].add(i);
    return weightsFromNeighbourLists(points.ids, sets.map((s) => [...s]), { rule: `knn:${k}:symmetric`, transform: "binary" });
  }
  return weightsFromNeighbourLists(points.ids, lists, { rule: `knn:${k}`, transform: "binary" });
}

/**
 * The smallest distance band that gives every region at least one neighbour:
 * max_i min_{j≠i} d_ij (the largest nearest-neighbour distance).
 *
 * @throws Error for fewer than 2 regions or invalid points.
 * Cost: O(n²).
 * @example
 *   smallestConnectingBand(centroids); // e.g. 31.7 (km)
 */
export function smallestConnectingBand(points: RegionPoints): number {
  const n = checkPoints(points, 2, "A distance band");
  let band = 0;
  for (let i = 0; i < n; i++) {
    let nearest = Infinity;
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const d = pointDistance(points, i, j);
      if (d < nearest) nearest = d;
    }
    if (nearest > band) band = nearest;
  }
  return band;
}

function bandThreshold(points: RegionPoints, threshold: number | undefined): number {
  if (threshold === undefined) return smallestConnectingBand(points);
  if (!Number.isFinite(threshold) || threshold <= 0) throw new Error(`A distance band must be finite and > 0; got ${String(threshold)}.`);
  return threshold;
}

/**
 * Distance-band weights (binary): i and j are neighbours when d_ij ≤ threshold
 * (inclusive). Without a threshold the smallest band that leaves no region
 * without a neighbour is used ({@link smallestConnectingBand}); the rule label
 * records the band actually used.
 *
 * @param options threshold in km (geographic) or coordinate units (planar).
 * @returns binary, symmetric weights with rule `"band:D"`.
 * @throws Error for a non-positive threshold or invalid points.
 * Cost: O(n²).
 * @example
 *   distanceBandWeights(centroids, { threshold: 50 });
 */
export function distanceBandWeights(points: RegionPoints, options: DistanceBandOptions = {}): SpatialWeights {
  const n = checkPoints(points, 2, "A distance band");
  const threshold = bandThreshold(points, options.threshold);
  const lists: number[][] = Array.from({ length: n }, () => []);
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      if (pointDistance(points, i, j) <= threshold) {
        lists[i].push(j);
        lists[j].push(i);
      }
    }
  }
  return weightsFromNeighbourLists(points.ids, lists, { rule: `band:${label(threshold)}`, transform: "binary" });
}

/**
 * Inverse-distance weights within a band: w_ij = d_ij^(−power) for
 * 0 < d_ij ≤ threshold, else no link. The default threshold is the smallest
 * connecting band. Untransformed (transform `"none"`); row-standardise
 * afterwards if wanted.
 *
 * @param options threshold (km or coordinate units) and power (> 0, default 1).
 * @returns symmetric weights with rule `"idw:D:POWER"`.
 * @throws Error for a non-positive threshold or power, or two regions with
 *   the same point (their weight would be infinite).
 * Cost: O(n²).
 * @example
 *   inverseDistanceWeights(centroids, { threshold: 100, power: 2 });
 */
export function inverseDistanceWeights(points: RegionPoints, options: InverseDistanceOptions = {}): SpatialWeights {
  const n = checkPoints(points, 2, "Inverse-distance weights");
  const power = options.power ?? 1;
  if (!Number.isFinite(power) || power <= 0) throw new Error(`The inverse-distance power must be finite and > 0; got ${String(power)}.`);
  const threshold = bandThreshold(points, options.threshold);
  const lists: number[][] = Array.from({ length: n }, () => []);
  const weightLists: number[][] = Array.from({ length: n }, () => []);
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const d = pointDistance(points, i, j);
      if (d > threshold) continue;
      if (d === 0) throw new Error(`Regions "${points.ids[i]}" and "${points.ids[j]}" have the same point; inverse distance is undefined.`);
      const w = Math.pow(d, -power);
      lists[i].push(j);
      weightLists[i].push(w);
      lists[j].push(i);
      weightLists[j].push(w);
    }
  }
  return weightsFromNeighbourLists(points.ids, lists, {
    rule: `idw:${label(threshold)}:${label(power)}`,
    weightLists,
    transform: "none",
  });
}
