/**
 * Area-weighted crosswalks between two boundary versions (pure: no database).
 *
 * For every pair of overlapping regions (s from the source version, t from the
 * target version) the crosswalk gives
 *
 *   share(s, t) = area(s ∩ t) / area(s),
 *
 * the part of s that lies in t. Intersections are computed by polygon-clipping
 * (Martinez–Rueda–Feito sweep line, exact predicates); areas are planar
 * (shoelace, in the coordinates' own unit squared) for projected coordinates, or
 * on the sphere for longitude/latitude (in km², sphere of radius R = 6371.0088 km,
 * the IUGG mean Earth radius). In longitude/latitude both the clipping and the
 * area read every edge as straight in degrees, as GeoJSON does (RFC 7946): the
 * area is the exact spherical area of such a polygon, ∬ R² cos φ dφ dλ. Reading
 * edges as great-circle arcs instead (d3-geo's geoArea, s2) does not fit a clip
 * done in the degree plane: the pieces of a county would not add up to the
 * county (by up to 0.08 % on the North Carolina counties). Great-circle and
 * straight-in-degrees edges enclose slightly different areas, which is why the
 * geographic check against R's s2 is looser than the planar one. Regions that
 * cross the antimeridian are not supported.
 *
 * Tolerances (both relative to the source's area, both options):
 * - `sliverTolerance` (default 1e-4, i.e. 0.01 % of the source): an overlap whose
 *   share is below it is a sliver (two digitisations of the same border) and is
 *   dropped and reported in `droppedSlivers`; its area is given back to the
 *   source's remaining pairs in proportion to their shares, so a source's
 *   coverage is the same with or without slivers.
 * - `nestingTolerance` (default 1e-9): a source whose coverage is within it of 1
 *   is fully covered and its shares are scaled to sum to 1; a fully covered source
 *   with a single target has share exactly 1 (exact nesting, e.g. a merge).
 *
 * Regions whose bounding boxes do not meet are never clipped: targets are put in
 * a uniform grid of cells (about one target per cell) and each source is
 * clipped only against the targets whose boxes meet its own.
 */
import polygonClipping, { type MultiPolygon, type Polygon, type Ring } from "polygon-clipping";
import { feature } from "topojson-client";
import type { GeometryCollection, GeometryObject, Topology } from "topojson-specification";
import type { Feature, GeoJsonProperties, Geometry } from "geojson";
import { boundaryIds, type LoadedBoundaries } from "@/lib/intake/boundaries";
import { detectCoordinateSystem } from "@/lib/spatial";
import { EARTH_RADIUS_KM } from "@/lib/spatial/weights/distance";

/** How coordinates are read: planar (projected) or geographic (longitude/latitude in degrees). */
export type CrosswalkCoordinates = "planar" | "geographic";

/** One boundary version: its loaded file, the object holding the regions and the property holding their codes. */
export interface BoundaryLayer {
  readonly boundaries: LoadedBoundaries;
  readonly objectName: string;
  readonly idProperty: string;
}

export interface AreaCrosswalkOptions {
  /** Omitted: detected from the bounding box of both layers (longitude/latitude ranges → geographic). */
  readonly coordinates?: CrosswalkCoordinates;
  /** Shares below this (relative to the source's area) are dropped as slivers; default {@link DEFAULT_SLIVER_TOLERANCE}. */
  readonly sliverTolerance?: number;
  /** Coverage (and shares) within this of 1 are snapped to exactly 1; default {@link DEFAULT_NESTING_TOLERANCE}. */
  readonly nestingTolerance?: number;
}

export const DEFAULT_SLIVER_TOLERANCE = 1e-4;
export const DEFAULT_NESTING_TOLERANCE = 1e-9;

/** One link of a crosswalk: the share of source `from` that goes to target `to`. */
export interface CrosswalkLink {
  readonly from: string;
  readonly to: string;
  /** In (0, 1]. */
  readonly share: number;
}

/** A link of an area crosswalk, with the overlap's area (share × the source's area, after sliver handling). */
export interface AreaCrosswalkLink extends CrosswalkLink {
  readonly area: number;
}

export interface CrosswalkRegionSummary {
  readonly id: string;
  /** Area in `areaUnit`; 0 for a region without a shape. */
  readonly area: number;
  /**
   * Source: Σ shares, the part of the region inside any target (1 when fully covered).
   * Target: Σ overlap areas / area, the part of the target that some source covers.
   */
  readonly coverage: number;
}

export interface DroppedSliver {
  readonly from: string;
  readonly to: string;
  /** The sliver's share of the source's area before it was dropped. */
  readonly share: number;
}

export interface AreaCrosswalk {
  readonly coordinates: CrosswalkCoordinates;
  /** Whether `coordinates` was given by the caller or detected. */
  readonly coordinatesDetected: boolean;
  /** "km²" (geographic, sphere of radius `earthRadiusKm`) or "coordinate units²" (planar). */
  readonly areaUnit: "km²" | "coordinate units²";
  readonly earthRadiusKm: number | null;
  readonly tolerances: { readonly sliver: number; readonly nesting: number };
  /** Ordered by source (in the source file's order), then target (in the target file's order). */
  readonly pairs: AreaCrosswalkLink[];
  /** Sources in file order. */
  readonly sources: CrosswalkRegionSummary[];
  /** Targets in file order. */
  readonly targets: CrosswalkRegionSummary[];
  /** Source codes with no overlap with any target (after slivers are dropped). */
  readonly unmatchedFrom: string[];
  /** Target codes no source maps to. */
  readonly uncoveredTo: string[];
  readonly droppedSlivers: DroppedSliver[];
  /** Notes on the inputs, e.g. a source covered more than once (overlapping targets). */
  readonly warnings: string[];
}

/** A geometry the clipping library could not handle, naming both regions. */
export class CrosswalkGeometryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "CrosswalkGeometryError";
  }
}

interface Region {
  id: string;
  polygons: MultiPolygon;
  bbox: [number, number, number, number];
  area: number;
}

function geometriesOf(object: GeometryObject<GeoJsonProperties>): GeometryObject<GeoJsonProperties>[] {
  return object.type === "GeometryCollection" ? (object as GeometryCollection<GeoJsonProperties>).geometries : [object];
}

function polygonsOf(geometry: Geometry | null, label: string): MultiPolygon {
  if (geometry === null) return [];
  if (geometry.type === "Polygon") return [geometry.coordinates as Polygon];
  if (geometry.type === "MultiPolygon") return geometry.coordinates as MultiPolygon;
  throw new CrosswalkGeometryError(`${label} is a ${geometry.type}, not a polygon or multipolygon`);
}

function bboxOf(polygons: MultiPolygon): [number, number, number, number] {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (const polygon of polygons) {
    // The outer ring bounds its holes.
    for (const [x, y] of polygon[0] ?? []) {
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
  }
  return [x0, y0, x1, y1];
}

/** Shoelace area of a ring, unsigned. */
function planarRingArea(ring: Ring): number {
  let sum = 0;
  const n = ring.length;
  for (let i = 0, j = n - 1; i < n; j = i++) sum += (ring[j][0] - ring[i][0]) * (ring[j][1] + ring[i][1]);
  return Math.abs(sum) / 2;
}

/**
 * Area on the unit sphere (steradians) of a ring whose edges are straight in
 * longitude/latitude degrees, as GeoJSON (RFC 7946 §3.1.1) reads them, by Green's
 * theorem: A = |Σ_edges ∫ sin φ dλ| with φ linear in λ along each edge, so
 * ∫ = Δλ · sin(φ̄) · sinc(Δφ/2) (φ̄ the edge's mean latitude). Exact for such
 * rings and additive under clipping in the degree plane, so the pieces of a
 * region always add up to the region.
 */
function sphericalRingArea(ring: Ring): number {
  const rad = Math.PI / 180;
  let sum = 0;
  const n = ring.length;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    const dLambda = (ring[i][0] - ring[j][0]) * rad;
    const half = ((ring[i][1] - ring[j][1]) * rad) / 2;
    const mean = ((ring[i][1] + ring[j][1]) * rad) / 2;
    const sinc = half === 0 ? 1 : Math.sin(half) / half;
    sum += dLambda * Math.sin(mean) * sinc;
  }
  return Math.abs(sum);
}

/** Area of clipped (normalised: outer ring, then holes) polygons in the crosswalk's unit. */
function areaOf(polygons: MultiPolygon, coordinates: CrosswalkCoordinates): number {
  const ringArea = coordinates === "planar" ? planarRingArea : sphericalRingArea;
  let total = 0;
  for (const polygon of polygons) {
    polygon.forEach((ring, k) => {
      total += k === 0 ? ringArea(ring) : -ringArea(ring);
    });
  }
  return coordinates === "planar" ? total : total * EARTH_RADIUS_KM * EARTH_RADIUS_KM;
}

function clip<T>(label: string, run: () => T): T {
  try {
    return run();
  } catch (error) {
    throw new CrosswalkGeometryError(`${label}: the polygon clipping failed (${error instanceof Error ? error.message : String(error)}); check the geometry for self-intersections`);
  }
}

/** The regions of a layer in file order, normalised, with their boxes (areas come once the coordinate system is known). */
function regionsOf(layer: BoundaryLayer, role: "source" | "target"): Omit<Region, "area">[] {
  const ids = boundaryIds(layer.boundaries, layer.objectName, layer.idProperty);
  const topology = layer.boundaries.topology as Topology;
  const geometries = geometriesOf(topology.objects[layer.objectName] as GeometryObject<GeoJsonProperties>);
  return geometries.map((geometry, index) => {
    const label = `${role} region '${ids[index]}' (feature ${index + 1} of object '${layer.objectName}')`;
    const raw = polygonsOf((feature(topology, geometry) as Feature).geometry, label);
    // A union with itself normalises the rings (winding, repeated points, overlapping parts).
    const polygons = raw.length === 0 ? [] : clip(label, () => polygonClipping.union(raw));
    return { id: ids[index], polygons, bbox: bboxOf(polygons) };
  });
}

/** Longitude/latitude or planar, from the regions' boxes (as the weights builder decides it). */
function coordinatesOf(regions: readonly Omit<Region, "area">[]): CrosswalkCoordinates {
  const xs: number[] = [];
  const ys: number[] = [];
  for (const r of regions) {
    if (!Number.isFinite(r.bbox[0])) continue;
    xs.push(r.bbox[0], r.bbox[2]);
    ys.push(r.bbox[1], r.bbox[3]);
  }
  return xs.length === 0 ? "planar" : detectCoordinateSystem(xs, ys);
}

/**
 * The area of every region of one boundary version, in the units
 * {@link areaCrosswalk} uses (km² on the sphere for longitude/latitude,
 * coordinate units² for planar): for turning the shares of an uploaded
 * crosswalk back into overlap areas.
 */
export function regionAreas(layer: BoundaryLayer, coordinates?: CrosswalkCoordinates): { coordinates: CrosswalkCoordinates; areas: Map<string, number> } {
  const regions = regionsOf(layer, "source");
  const system = coordinates ?? coordinatesOf(regions);
  return { coordinates: system, areas: new Map(regions.map((r) => [r.id, areaOf(r.polygons, system)])) };
}

/** A uniform grid over the targets' boxes: about one target per cell. */
class BoxIndex {
  private readonly cells: number[][];
  private readonly stamp: Int32Array;
  private query = 0;
  private readonly x0: number;
  private readonly y0: number;
  private readonly cellW: number;
  private readonly cellH: number;
  private readonly nx: number;
  private readonly ny: number;

  constructor(private readonly boxes: readonly [number, number, number, number][]) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (const b of boxes) {
      if (!Number.isFinite(b[0])) continue;
      x0 = Math.min(x0, b[0]);
      y0 = Math.min(y0, b[1]);
      x1 = Math.max(x1, b[2]);
      y1 = Math.max(y1, b[3]);
    }
    const side = Math.max(1, Math.ceil(Math.sqrt(boxes.length)));
    this.x0 = Number.isFinite(x0) ? x0 : 0;
    this.y0 = Number.isFinite(y0) ? y0 : 0;
    this.nx = side;
    this.ny = side;
    this.cellW = Number.isFinite(x0) && x1 > x0 ? (x1 - x0) / side : 1;
    this.cellH = Number.isFinite(y0) && y1 > y0 ? (y1 - y0) / side : 1;
    this.cells = Array.from({ length: this.nx * this.ny }, () => []);
    this.stamp = new Int32Array(boxes.length);
    boxes.forEach((b, i) => {
      if (!Number.isFinite(b[0])) return;
      const [cx0, cy0, cx1, cy1] = this.cellRange(b);
      for (let cy = cy0; cy <= cy1; cy++) for (let cx = cx0; cx <= cx1; cx++) this.cells[cy * this.nx + cx].push(i);
    });
  }

  private cellRange(b: readonly number[]): [number, number, number, number] {
    const clampX = (v: number) => Math.min(this.nx - 1, Math.max(0, Math.floor((v - this.x0) / this.cellW)));
    const clampY = (v: number) => Math.min(this.ny - 1, Math.max(0, Math.floor((v - this.y0) / this.cellH)));
    return [clampX(b[0]), clampY(b[1]), clampX(b[2]), clampY(b[3])];
  }

  /** Indices (ascending) of the boxes that meet `b` (touching counts). */
  search(b: readonly [number, number, number, number]): number[] {
    if (!Number.isFinite(b[0])) return [];
    this.query += 1;
    const found: number[] = [];
    const [cx0, cy0, cx1, cy1] = this.cellRange(b);
    for (let cy = cy0; cy <= cy1; cy++) {
      for (let cx = cx0; cx <= cx1; cx++) {
        for (const i of this.cells[cy * this.nx + cx]) {
          if (this.stamp[i] === this.query) continue;
          this.stamp[i] = this.query;
          const o = this.boxes[i];
          if (o[0] <= b[2] && o[2] >= b[0] && o[1] <= b[3] && o[3] >= b[1]) found.push(i);
        }
      }
    }
    return found.sort((p, q) => p - q);
  }
}

function checkTolerance(name: string, value: number): number {
  if (!Number.isFinite(value) || value < 0 || value >= 1) throw new RangeError(`${name} must be a number in [0, 1); got ${value}`);
  return value;
}

/**
 * The area-weighted crosswalk from `from` to `to` (see the module comment for
 * the formula and tolerances).
 *
 * @throws BoundaryError (lib/intake) when an object or id property is missing or codes repeat;
 *   CrosswalkGeometryError when a geometry is not polygonal or cannot be clipped;
 *   RangeError for a tolerance outside [0, 1).
 * Cost: O(n log n) for the index plus one clipping per pair of regions whose boxes meet.
 * @example
 *   const xw = areaCrosswalk(
 *     { boundaries: loadBoundaries(oldText), objectName: "districts", idProperty: "code" },
 *     { boundaries: loadBoundaries(newText), objectName: "districts", idProperty: "code" },
 *   );
 *   xw.pairs; // [{ from: "D01", to: "N01", share: 1, area: 412.7 }, …]
 */
export function areaCrosswalk(from: BoundaryLayer, to: BoundaryLayer, options: AreaCrosswalkOptions = {}): AreaCrosswalk {
  const sliver = checkTolerance("sliverTolerance", options.sliverTolerance ?? DEFAULT_SLIVER_TOLERANCE);
  const nesting = checkTolerance("nestingTolerance", options.nestingTolerance ?? DEFAULT_NESTING_TOLERANCE);
  const sourcesRaw = regionsOf(from, "source");
  const targetsRaw = regionsOf(to, "target");

  const coordinatesDetected = options.coordinates === undefined;
  const system = options.coordinates ?? coordinatesOf([...sourcesRaw, ...targetsRaw]);
  const withArea = (r: Omit<Region, "area">): Region => ({ ...r, area: areaOf(r.polygons, system) });
  const sources = sourcesRaw.map(withArea);
  const targets = targetsRaw.map(withArea);

  const index = new BoxIndex(targets.map((t) => t.bbox));
  const pairs: AreaCrosswalkLink[] = [];
  const droppedSlivers: DroppedSliver[] = [];
  const warnings: string[] = [];
  const sourceSummaries: CrosswalkRegionSummary[] = [];
  const targetCovered = new Float64Array(targets.length);

  for (const s of sources) {
    if (s.area <= 0) {
      sourceSummaries.push({ id: s.id, area: 0, coverage: 0 });
      continue;
    }
    const overlaps: { t: number; share: number }[] = [];
    for (const t of index.search(s.bbox)) {
      const target = targets[t];
      if (target.area <= 0) continue;
      const clipped = clip(`source '${s.id}' and target '${target.id}'`, () => polygonClipping.intersection(s.polygons, target.polygons));
      const area = clipped.length === 0 ? 0 : areaOf(clipped, system);
      if (area > 0) overlaps.push({ t, share: area / s.area });
    }
    const coverage = overlaps.reduce((sum, o) => sum + o.share, 0);
    const kept = overlaps.filter((o) => {
      if (o.share >= sliver) return true;
      droppedSlivers.push({ from: s.id, to: targets[o.t].id, share: o.share });
      return false;
    });
    const keptSum = kept.reduce((sum, o) => sum + o.share, 0);
    const full = Math.abs(coverage - 1) <= nesting;
    if (coverage > 1 + nesting) {
      warnings.push(`source '${s.id}' is covered ${coverage.toPrecision(12)} times: the target regions overlap`);
    }
    // Slivers' area goes back to the kept pairs pro rata; a fully covered source sums to exactly 1 (up to rounding).
    const scale = keptSum > 0 ? (full ? 1 : coverage) / keptSum : 0;
    let finalCoverage = 0;
    for (const o of kept) {
      // Nested wholly in one target (a merge, or a split's unchanged part): exactly 1.
      const share = full && kept.length === 1 ? 1 : o.share * scale;
      finalCoverage += share;
      const area = share === 1 ? s.area : share * s.area;
      targetCovered[o.t] += area;
      pairs.push({ from: s.id, to: targets[o.t].id, share, area });
    }
    sourceSummaries.push({ id: s.id, area: s.area, coverage: kept.length === 0 ? 0 : full ? 1 : finalCoverage });
  }

  const targetSummaries = targets.map((t, i) => ({
    id: t.id,
    area: t.area,
    coverage: t.area > 0 ? (Math.abs(targetCovered[i] / t.area - 1) <= nesting ? 1 : targetCovered[i] / t.area) : 0,
  }));
  const linkedSources = new Set(pairs.map((p) => p.from));
  const linkedTargets = new Set(pairs.map((p) => p.to));
  return {
    coordinates: system,
    coordinatesDetected,
    areaUnit: system === "geographic" ? "km²" : "coordinate units²",
    earthRadiusKm: system === "geographic" ? EARTH_RADIUS_KM : null,
    tolerances: { sliver, nesting },
    pairs,
    sources: sourceSummaries,
    targets: targetSummaries,
    unmatchedFrom: sources.filter((s) => !linkedSources.has(s.id)).map((s) => s.id),
    uncoveredTo: targets.filter((t) => !linkedTargets.has(t.id)).map((t) => t.id),
    droppedSlivers,
    warnings,
  };
}
