/**
 * Contiguity weights (rook, queen) and region centroids from a TopoJSON
 * topology, decoded with `topojson-client`.
 *
 * In a topology, a boundary shared by two regions is stored once, as an arc
 * both regions reference. Hence:
 * - rook contiguity = the two regions reference at least one common arc
 *   (they share a boundary line);
 * - queen contiguity = the two regions have at least one vertex in common
 *   (a shared line or a single shared corner). Vertices are compared exactly,
 *   after decoding, so a topology built from one set of coordinates (as
 *   topojson-server builds it) is required; no snapping tolerance is applied.
 */
import { transform as topologyTransform } from "topojson-client";
import type { GeometryObject, Properties, Topology } from "topojson-specification";
import type { CoordinateSystem, RegionPoints, SpatialWeights } from "../types";
import { weightsFromNeighbourLists } from "./sparse";
import { detectCoordinateSystem } from "./distance";

/** Which object of the topology holds the regions and which property names them. */
export interface TopologyRegionsOptions {
  /** Name of the object in `topology.objects` (a GeometryCollection, or a single geometry). */
  readonly object: string;
  /** Property holding the region id; `"id"` also accepts the geometry's own `id`. */
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

interface TopologyRegion {
  readonly id: string;
  /** Polygons, each a list of rings, each a list of arc indexes (negative = reversed). */
  readonly polygons: readonly (readonly (readonly number[])[])[];
  /** Point coordinates (decoded) for Point/MultiPoint regions. */
  readonly points: readonly (readonly number[])[];
}

/** The geometries of the named object, flattened one level for GeometryCollections. */
function regionGeometries(topology: Topology, object: string): GeometryObject<Properties>[] {
  if (!topology || topology.type !== "Topology" || typeof topology.objects !== "object" || !Array.isArray(topology.arcs)) {
    throw new Error("The boundaries are not a TopoJSON topology (expected type \"Topology\" with objects and arcs).");
  }
  const found = topology.objects[object];
  if (found === undefined) {
    const names = Object.keys(topology.objects);
    throw new Error(`The topology has no object "${object}"; it has ${names.map((s) => `"${s}"`).join(", ") || "none"}.`);
  }
  return found.type === "GeometryCollection" ? found.geometries : [found];
}

function readRegions(topology: Topology, options: TopologyRegionsOptions): TopologyRegion[] {
  const geometries = regionGeometries(topology, options.object);
  const decodePoint = topologyTransform(topology.transform ?? null);
  const seen = new Map<string, number>();
  return geometries.map((geometry, index) => {
    const properties = (geometry as { properties?: Record<string, unknown> | null }).properties ?? {};
    let raw: unknown = properties[options.idProperty];
    if ((raw === undefined || raw === null) && options.idProperty === "id") raw = (geometry as { id?: unknown }).id;
    if (raw === undefined || raw === null || raw === "") {
      throw new Error(`Region ${index} of object "${options.object}" has no "${options.idProperty}" property.`);
    }
    if (typeof raw !== "string" && typeof raw !== "number") {
      throw new Error(`Region ${index} of object "${options.object}" has a "${options.idProperty}" that is not a string or number.`);
    }
    const id = String(raw);
    const previous = seen.get(id);
    if (previous !== undefined) {
      throw new Error(`Region id "${id}" appears twice in object "${options.object}" (regions ${previous} and ${index}).`);
    }
    seen.set(id, index);
    switch (geometry.type) {
      case "Polygon":
        return { id, polygons: [geometry.arcs], points: [] };
      case "MultiPolygon":
        return { id, polygons: geometry.arcs, points: [] };
      case "Point":
        return { id, polygons: [], points: [decodePoint(geometry.coordinates)] };
      case "MultiPoint":
        return { id, polygons: [], points: geometry.coordinates.map((p) => decodePoint(p)) };
      case null:
        return { id, polygons: [], points: [] };
      default:
        throw new Error(`Region "${id}" of object "${options.object}" is a ${String(geometry.type)}; regions must be polygons.`);
    }
  });
}

/** Decodes every arc once into flat absolute coordinates [x0, y0, x1, y1, ...]. */
function decodeArcs(topology: Topology): Float64Array[] {
  const decode = topologyTransform(topology.transform ?? null);
  return topology.arcs.map((arc) => {
    const out = new Float64Array(arc.length * 2);
    for (let k = 0; k < arc.length; k++) {
      // the index argument only matters as "first position of the arc" (resets the delta decoding)
      const p = decode(arc[k], k > 0);
      out[2 * k] = p[0];
      out[2 * k + 1] = p[1];
    }
    return out;
  });
}

function checkArc(index: number, arcCount: number, regionId: string): number {
  const a = index < 0 ? ~index : index;
  if (!Number.isInteger(a) || a >= arcCount) {
    throw new Error(`Region "${regionId}" references arc ${index}, but the topology has ${arcCount} arcs.`);
  }
  return a;
}

/**
 * The region ids of a TopoJSON object, in the order of its geometries.
 *
 * @throws Error when the object is absent, an id is missing or repeated.
 * Cost: O(number of geometries).
 * @example
 *   topologyRegionIds(topology, { object: "districts", idProperty: "code" }); // ["D01", "D02", ...]
 */
export function topologyRegionIds(topology: Topology, options: TopologyRegionsOptions): string[] {
  return readRegions(topology, options).map((r) => r.id);
}

/**
 * Rook or queen contiguity weights (binary) from a TopoJSON object.
 *
 * - Rook: i and j are neighbours when they reference a common arc.
 * - Queen: i and j are neighbours when they have a vertex in common.
 * Regions without geometry, or touching nobody, become islands (empty rows).
 *
 * Source: the contiguity definitions of Cliff & Ord (1981), ch. 1, named after
 * chess moves on a lattice.
 * @param topology a TopoJSON Topology (quantised or not).
 * @param options object name, id property and rule.
 * @returns binary weights with rule `"rook"` or `"queen"`, rows in the order of the geometries.
 * @throws Error when the object is missing, an id is missing or repeated, a
 *   geometry is not a polygon (or null), or an arc index is out of range.
 * Cost: O(A + V) for A arc references and V vertices, plus O(L log k) to sort rows.
 * @example
 *   // a 3 × 3 grid of squares: the centre cell has 4 rook and 8 queen neighbours
 *   contiguityWeights(grid, { object: "cells", idProperty: "id", rule: "queen" });
 */
export function contiguityWeights(topology: Topology, options: ContiguityOptions): SpatialWeights {
  if (options.rule !== "rook" && options.rule !== "queen") {
    throw new Error(`Contiguity rule must be "rook" or "queen"; got "${String(options.rule)}".`);
  }
  const regions = readRegions(topology, options);
  const n = regions.length;
  const arcCount = topology.arcs.length;
  // Which regions use each arc (each region listed once per arc).
  const arcUsers: number[][] = Array.from({ length: arcCount }, () => []);
  regions.forEach((region, i) => {
    for (const polygon of region.polygons) {
      for (const ring of polygon) {
        for (const index of ring) {
          const a = checkArc(index, arcCount, region.id);
          const users = arcUsers[a];
          if (users[users.length - 1] !== i) users.push(i);
        }
      }
    }
  });
  const neighbourSets: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
  const linkGroup = (group: readonly number[]): void => {
    for (let a = 0; a < group.length; a++) {
      for (let b = 0; b < group.length; b++) {
        if (group[a] !== group[b]) neighbourSets[group[a]].add(group[b]);
      }
    }
  };
  if (options.rule === "rook") {
    for (const users of arcUsers) if (users.length > 1) linkGroup(users);
  } else {
    const arcs = decodeArcs(topology);
    const vertexUsers = new Map<string, number[]>();
    arcUsers.forEach((users, a) => {
      if (users.length === 0) return;
      const coordinates = arcs[a];
      for (let k = 0; k < coordinates.length; k += 2) {
        const key = `${coordinates[k]},${coordinates[k + 1]}`;
        const list = vertexUsers.get(key);
        if (list === undefined) vertexUsers.set(key, users.slice());
        else for (const u of users) if (!list.includes(u)) list.push(u);
      }
    });
    for (const users of vertexUsers.values()) if (users.length > 1) linkGroup(users);
  }
  const ids = regions.map((r) => r.id);
  const lists = neighbourSets.map((s) => [...s].sort((a, b) => a - b));
  return weightsFromNeighbourLists(ids, lists, { rule: options.rule, transform: "binary" });
}

/**
 * Centroids of the regions of a TopoJSON object.
 *
 * For polygons: the area-weighted centroid of all exterior rings minus holes,
 * computed with the planar shoelace formulas in the topology's own coordinates
 * (for longitude/latitude this is the centroid in degree space, adequate for
 * regions far smaller than a hemisphere; regions crossing the ±180° meridian
 * are not supported). A region of zero area uses the mean of its vertices; a
 * Point/MultiPoint region uses the mean of its points.
 *
 * The coordinate system is `options.coordinates` when given, else detected
 * from the bounding box of all vertices by {@link detectCoordinateSystem}.
 *
 * @throws Error as {@link contiguityWeights}, or for a region without geometry.
 * Cost: O(V).
 * @example
 *   regionCentroids(topology, { object: "districts", idProperty: "code", coordinates: "planar" });
 */
export function regionCentroids(topology: Topology, options: CentroidOptions): RegionPoints {
  const regions = readRegions(topology, options);
  const arcs = decodeArcs(topology);
  const n = regions.length;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  let minX = Infinity;
  let maxX = -Infinity;
  let minY = Infinity;
  let maxY = -Infinity;
  const extend = (px: number, py: number): void => {
    if (px < minX) minX = px;
    if (px > maxX) maxX = px;
    if (py < minY) minY = py;
    if (py > maxY) maxY = py;
  };
  regions.forEach((region, i) => {
    let areaSum = 0;
    let cxSum = 0;
    let cySum = 0;
    let vertexCount = 0;
    let vxSum = 0;
    let vySum = 0;
    for (const polygon of region.polygons) {
      polygon.forEach((ring, ringIndex) => {
        const coordinates = ringCoordinates(ring, arcs, region.id);
        // Shoelace: A = ½ Σ (x_k y_{k+1} − x_{k+1} y_k); C = Σ (p_k + p_{k+1})(cross) / (6A).
        // Coordinates are taken relative to the ring's first vertex for accuracy.
        const ox = coordinates[0];
        const oy = coordinates[1];
        let twiceArea = 0;
        let cx = 0;
        let cy = 0;
        const m = coordinates.length / 2;
        for (let k = 0; k < m; k++) {
          const x0 = coordinates[2 * k] - ox;
          const y0 = coordinates[2 * k + 1] - oy;
          const k1 = (k + 1) % m;
          const x1 = coordinates[2 * k1] - ox;
          const y1 = coordinates[2 * k1 + 1] - oy;
          const cross = x0 * y1 - x1 * y0;
          twiceArea += cross;
          cx += (x0 + x1) * cross;
          cy += (y0 + y1) * cross;
          extend(coordinates[2 * k], coordinates[2 * k + 1]);
          vxSum += coordinates[2 * k];
          vySum += coordinates[2 * k + 1];
          vertexCount++;
        }
        if (twiceArea === 0) return;
        const area = Math.abs(twiceArea) / 2;
        // Exterior ring (first of a polygon) adds, holes subtract.
        const sign = ringIndex === 0 ? 1 : -1;
        const ringCx = cx / (3 * twiceArea) + ox;
        const ringCy = cy / (3 * twiceArea) + oy;
        areaSum += sign * area;
        cxSum += sign * area * ringCx;
        cySum += sign * area * ringCy;
      });
    }
    for (const p of region.points) {
      extend(p[0], p[1]);
      vxSum += p[0];
      vySum += p[1];
      vertexCount++;
    }
    if (areaSum > 0) {
      x[i] = cxSum / areaSum;
      y[i] = cySum / areaSum;
    } else if (vertexCount > 0) {
      x[i] = vxSum / vertexCount;
      y[i] = vySum / vertexCount;
    } else {
      throw new Error(`Region "${region.id}" has no geometry, so it has no centroid.`);
    }
  });
  const coordinates = options.coordinates ?? detectCoordinateSystem([minX, maxX], [minY, maxY]);
  return { ids: regions.map((r) => r.id), x, y, coordinates };
}

/** Absolute coordinates of a ring, joining its arcs (dropping repeated joints and the closing vertex). */
function ringCoordinates(ring: readonly number[], arcs: readonly Float64Array[], regionId: string): Float64Array {
  const parts: number[] = [];
  for (const index of ring) {
    const a = checkArc(index, arcs.length, regionId);
    const arc = arcs[a];
    const m = arc.length / 2;
    for (let k = 0; k < m; k++) {
      const source = index < 0 ? m - 1 - k : k;
      if (parts.length > 0 && k === 0) continue; // first vertex repeats the previous arc's last
      parts.push(arc[2 * source], arc[2 * source + 1]);
    }
  }
  // Drop the closing vertex when it repeats the first.
  const len = parts.length;
  if (len >= 4 && parts[0] === parts[len - 2] && parts[1] === parts[len - 1]) parts.length = len - 2;
  return Float64Array.from(parts);
}
