/**
 * The one door between the product and the boundary-reform engine: deriving
 * an area-weighted crosswalk between two boundary versions, harmonising one
 * indicator's values through a crosswalk, and reading a steward's crosswalk
 * CSV. Everything else in lib/reforms, the routes, the worker and the demo
 * call these functions only, so the engine behind them can be swapped in this
 * one file.
 *
 * Pure: no database, no next, no react.
 *
 * Overlap areas are exact for simple polygons with holes: the area of A ∩ B
 * is the sum, over the signed triangles of a fan of A's rings and of B's
 * rings (from a common origin), of the signed area of each triangle pair's
 * intersection (two triangles are convex, so Sutherland–Hodgman clipping is
 * exact). Longitude/latitude is first projected onto Lambert's cylindrical
 * equal-area projection (x = λ, y = sin φ, in radians), which keeps area
 * ratios; planar coordinates are used as given.
 */
import { feature } from "topojson-client";
import type { Feature, FeatureCollection, Geometry, GeoJsonProperties, Position } from "geojson";
import type { Topology } from "topojson-specification";
import type { IntakeProblem } from "@/lib/intake/report";

export interface TopologyInput {
  topology: Topology;
  /** The object of the topology that holds the regions. */
  object: string;
  /** The property holding the region code. */
  idProperty: string;
}

export interface CrosswalkPair {
  from: string;
  to: string;
  /** Fraction of the source region (by area for derived crosswalks) that lies in the target region, in (0, 1]. */
  share: number;
}

export interface DerivedCrosswalk {
  pairs: CrosswalkPair[];
  /** Source regions overlapping no target region. */
  unmatchedFrom: string[];
  /** Target regions no source region overlaps. */
  uncoveredTo: string[];
  /** Overlaps smaller than SLIVER_SHARE of their source region (digitising noise along shared borders), left out of `pairs`. */
  droppedSlivers: CrosswalkPair[];
  coordinates: "planar" | "geographic";
  /** Area of every source region (projected units²; equal-area units for geographic coordinates). share × fromAreas[from] is the overlap area. */
  fromAreas: Record<string, number>;
  /** Area of every target region, same units. */
  toAreas: Record<string, number>;
}

/** Overlaps below this share of their source region are dropped as slivers. */
export const SLIVER_SHARE = 0.001;
/** Overlaps below this share are floating-point noise along a shared border, not slivers. */
const ROUNDING_SHARE = 1e-9;

type Ring = [number, number][];
interface RegionShape {
  code: string;
  /** Rings with their orientation as given; the sign of each ring's area is normalised below (outer +, holes −). */
  rings: { ring: Ring; sign: 1 | -1 }[];
  bbox: [number, number, number, number];
  area: number;
}

function signedRingArea(ring: Ring): number {
  let sum = 0;
  for (let i = 0, n = ring.length; i < n; i += 1) {
    const [x1, y1] = ring[i];
    const [x2, y2] = ring[(i + 1) % n];
    sum += x1 * y2 - x2 * y1;
  }
  return sum / 2;
}

function isGeographic(collection: FeatureCollection, topology: Topology): boolean {
  const bbox = topology.bbox as number[] | undefined;
  if (bbox && bbox.length >= 4) return bbox[0] >= -180 && bbox[2] <= 180 && bbox[1] >= -90 && bbox[3] <= 90;
  let ok = true;
  const visit = (p: Position) => {
    if (p[0] < -180 || p[0] > 180 || p[1] < -90 || p[1] > 90) ok = false;
  };
  for (const f of collection.features) forEachPosition(f.geometry, visit);
  return ok;
}

function forEachPosition(geometry: Geometry | null, visit: (p: Position) => void): void {
  if (!geometry) return;
  if (geometry.type === "Polygon") geometry.coordinates.forEach((r) => r.forEach(visit));
  else if (geometry.type === "MultiPolygon") geometry.coordinates.forEach((poly) => poly.forEach((r) => r.forEach(visit)));
}

function regionsOf(input: TopologyInput, geographic: boolean | null): { regions: RegionShape[]; geographic: boolean } {
  const object = input.topology.objects[input.object];
  if (!object) throw new Error(`the topology has no object '${input.object}'`);
  const converted = feature(input.topology, object) as FeatureCollection<Geometry, GeoJsonProperties> | Feature<Geometry, GeoJsonProperties>;
  const collection: FeatureCollection = converted.type === "FeatureCollection" ? converted : { type: "FeatureCollection", features: [converted] };
  const geo = geographic ?? isGeographic(collection, input.topology);
  const project = (p: Position): [number, number] => (geo ? [(p[0] * Math.PI) / 180, Math.sin((p[1] * Math.PI) / 180)] : [p[0], p[1]]);
  const regions: RegionShape[] = [];
  for (const f of collection.features) {
    const code = f.properties?.[input.idProperty];
    if (code === undefined || code === null || String(code).trim() === "") continue;
    const polygons: Position[][][] = f.geometry?.type === "Polygon" ? [f.geometry.coordinates] : f.geometry?.type === "MultiPolygon" ? f.geometry.coordinates : [];
    const rings: RegionShape["rings"] = [];
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    let area = 0;
    for (const polygon of polygons) {
      polygon.forEach((raw, index) => {
        const ring = raw.map(project);
        if (ring.length > 1 && ring[0][0] === ring[ring.length - 1][0] && ring[0][1] === ring[ring.length - 1][1]) ring.pop();
        if (ring.length < 3) return;
        // GeoJSON: the first ring of a polygon is its outline, the others holes, whatever their winding.
        const sign: 1 | -1 = index === 0 ? 1 : -1;
        const oriented = Math.sign(signedRingArea(ring)) === sign ? ring : [...ring].reverse();
        rings.push({ ring: oriented, sign });
        area += signedRingArea(oriented);
        for (const [x, y] of ring) {
          x0 = Math.min(x0, x); y0 = Math.min(y0, y); x1 = Math.max(x1, x); y1 = Math.max(y1, y);
        }
      });
    }
    regions.push({ code: String(code), rings, bbox: [x0, y0, x1, y1], area });
  }
  return { regions, geographic: geo };
}

/** Intersection of two convex polygons given counter-clockwise (Sutherland–Hodgman). */
function clipConvex(subject: Ring, clip: Ring): Ring {
  let output = subject;
  for (let i = 0, n = clip.length; i < n && output.length > 0; i += 1) {
    const [ax, ay] = clip[i];
    const [bx, by] = clip[(i + 1) % n];
    const inside = (p: [number, number]) => (bx - ax) * (p[1] - ay) - (by - ay) * (p[0] - ax) >= 0;
    const input = output;
    output = [];
    for (let j = 0, m = input.length; j < m; j += 1) {
      const current = input[j];
      const previous = input[(j + m - 1) % m];
      const cin = inside(current);
      const pin = inside(previous);
      if (cin !== pin) {
        const dx = current[0] - previous[0];
        const dy = current[1] - previous[1];
        const denominator = (bx - ax) * dy - (by - ay) * dx;
        const t = denominator === 0 ? 0 : ((by - ay) * (previous[0] - ax) - (bx - ax) * (previous[1] - ay)) / denominator;
        output.push([previous[0] + t * dx, previous[1] + t * dy]);
      }
      if (cin) output.push(current);
    }
  }
  return output;
}

/** Signed area of the intersection of two signed triangles (area sign × area of the overlap of the unsigned triangles). */
function triangleOverlap(a: Ring, b: Ring): number {
  const sa = Math.sign(signedRingArea(a));
  const sb = Math.sign(signedRingArea(b));
  if (sa === 0 || sb === 0) return 0;
  const ca = sa > 0 ? a : [a[0], a[2], a[1]] as Ring;
  const cb = sb > 0 ? b : [b[0], b[2], b[1]] as Ring;
  const clipped = clipConvex(ca, cb);
  return clipped.length < 3 ? 0 : sa * sb * Math.abs(signedRingArea(clipped));
}

function fan(rings: RegionShape["rings"], origin: [number, number]): Ring[] {
  const triangles: Ring[] = [];
  for (const { ring } of rings) {
    for (let i = 0, n = ring.length; i < n; i += 1) triangles.push([origin, ring[i], ring[(i + 1) % n]]);
  }
  return triangles;
}

/** Area of the intersection of two regions (exact for simple polygons, holes included). */
export function overlapArea(a: RegionShape, b: RegionShape): number {
  if (a.bbox[2] <= b.bbox[0] || b.bbox[2] <= a.bbox[0] || a.bbox[3] <= b.bbox[1] || b.bbox[3] <= a.bbox[1]) return 0;
  const origin: [number, number] = [(Math.max(a.bbox[0], b.bbox[0]) + Math.min(a.bbox[2], b.bbox[2])) / 2, (Math.max(a.bbox[1], b.bbox[1]) + Math.min(a.bbox[3], b.bbox[3])) / 2];
  const ta = fan(a.rings, origin);
  const tb = fan(b.rings, origin);
  let sum = 0;
  for (const x of ta) for (const y of tb) sum += triangleOverlap(x, y);
  return Math.max(0, sum);
}

/** Area of every region of a boundary version (projected units², equal-area for longitude/latitude). */
export function regionAreas(input: TopologyInput): Record<string, number> {
  return Object.fromEntries(regionsOf(input, null).regions.map((r) => [r.code, r.area]));
}

/**
 * The area-weighted crosswalk from one boundary version to another: for each
 * source region, the share of its area lying in each target region.
 */
export function deriveCrosswalk(from: TopologyInput, to: TopologyInput): DerivedCrosswalk {
  const source = regionsOf(from, null);
  const target = regionsOf(to, source.geographic);
  const pairs: CrosswalkPair[] = [];
  const droppedSlivers: CrosswalkPair[] = [];
  const covered = new Set<string>();
  const unmatchedFrom: string[] = [];
  for (const s of source.regions) {
    let any = false;
    for (const t of target.regions) {
      if (s.area <= 0) break;
      const overlap = overlapArea(s, t);
      if (overlap <= 0) continue;
      const share = Math.min(1, overlap / s.area);
      // Rounding noise of borders the two versions share exactly: no overlap at all.
      if (share < ROUNDING_SHARE) continue;
      if (share < SLIVER_SHARE) {
        droppedSlivers.push({ from: s.code, to: t.code, share });
        continue;
      }
      any = true;
      covered.add(t.code);
      pairs.push({ from: s.code, to: t.code, share });
    }
    if (!any) unmatchedFrom.push(s.code);
  }
  return {
    pairs,
    unmatchedFrom,
    uncoveredTo: target.regions.filter((t) => !covered.has(t.code)).map((t) => t.code),
    droppedSlivers,
    coordinates: source.geographic ? "geographic" : "planar",
    fromAreas: Object.fromEntries(source.regions.map((r) => [r.code, r.area])),
    toAreas: Object.fromEntries(target.regions.map((r) => [r.code, r.area])),
  };
}

// ---------------------------------------------------------------- harmonisation

export type HarmoniseMethod =
  /** Counts: each target gets the share-weighted sum of its sources. */
  | { kind: "extensive" }
  /** Rates, averages: the mean of the sources weighted by their overlap with the target (aligned with `pairs`), over the covered part of the target. */
  | { kind: "intensive"; overlapAreas: readonly number[] }
  /** The mean of the sources weighted by the part of a denominator indicator (e.g. population) each sends to the target. */
  | { kind: "intensive-by"; denominatorByFrom: ReadonlyMap<string, number | null> };

/**
 * One indicator of one period onto the target regions. A target whose sources
 * include a missing value is missing for an extensive indicator (a sum with a
 * gap is not the total); an intensive one is the weighted mean over the
 * sources that have a value, missing when none has.
 */
export function harmoniseValues(pairs: readonly CrosswalkPair[], valuesByFrom: ReadonlyMap<string, number | null>, method: HarmoniseMethod): Map<string, number | null> {
  const sums = new Map<string, { total: number; weight: number; gap: boolean }>();
  pairs.forEach((pair, index) => {
    const entry = sums.get(pair.to) ?? { total: 0, weight: 0, gap: false };
    sums.set(pair.to, entry);
    const value = valuesByFrom.get(pair.from);
    if (method.kind === "extensive") {
      if (value === undefined || value === null || !Number.isFinite(value)) entry.gap = true;
      else entry.total += pair.share * value;
      return;
    }
    if (value === undefined || value === null || !Number.isFinite(value)) return;
    let weight: number;
    if (method.kind === "intensive") {
      weight = method.overlapAreas[index] ?? Number.NaN;
    } else {
      const denominator = method.denominatorByFrom.get(pair.from);
      weight = denominator === undefined || denominator === null ? Number.NaN : pair.share * denominator;
    }
    if (!Number.isFinite(weight) || weight <= 0) return;
    entry.total += weight * value;
    entry.weight += weight;
  });
  const result = new Map<string, number | null>();
  for (const [to, { total, weight, gap }] of sums) {
    if (method.kind === "extensive") result.set(to, gap ? null : total);
    else result.set(to, weight > 0 ? total / weight : null);
  }
  return result;
}

// ---------------------------------------------------------------- crosswalk CSV

export type CrosswalkIssueCode =
  | "empty-file"
  | "header"
  | "columns"
  | "unknown-from"
  | "unknown-to"
  | "bad-share"
  | "duplicate-pair"
  | "shares-sum"
  | "unmatched-from"
  | "uncovered-to";

/** One problem of a crosswalk file: the intake's located problem plus its file line (1 = header), a code and a severity. */
export interface CrosswalkIssue extends IntakeProblem {
  code: CrosswalkIssueCode;
  line: number | null;
  severity: "error" | "warning";
}

/** Shares of one source region may sum to 1 within this tolerance (rounded published shares). */
export const SHARE_SUM_TOLERANCE = 0.005;
const MAX_LISTED = 200;

function splitCsvLine(line: string, delimiter: string): string[] {
  const cells: string[] = [];
  let current = "";
  let quoted = false;
  for (let i = 0; i < line.length; i += 1) {
    const c = line[i];
    if (quoted) {
      if (c === '"' && line[i + 1] === '"') {
        current += '"';
        i += 1;
      } else if (c === '"') quoted = false;
      else current += c;
    } else if (c === '"') quoted = true;
    else if (c === delimiter) {
      cells.push(current);
      current = "";
    } else current += c;
  }
  cells.push(current);
  return cells.map((cell) => cell.trim());
}

/**
 * Reads a crosswalk CSV: a header naming `from`, `to` and `share` (any order,
 * comma, semicolon or tab separated, other columns ignored), then one pair
 * per line. Errors: unknown codes, shares that are not numbers in (0, 1],
 * repeated pairs, and a source whose shares do not sum to 1. Warnings: source
 * regions without any pair, target regions no pair reaches.
 */
export function parseCrosswalkCsv(text: string, fromCodes: readonly string[], toCodes: readonly string[]): { pairs: CrosswalkPair[]; issues: CrosswalkIssue[] } {
  const issues: CrosswalkIssue[] = [];
  const issue = (code: CrosswalkIssueCode, severity: "error" | "warning", line: number | null, column: string | null, message: string) => {
    if (issues.length < MAX_LISTED) issues.push({ code, severity, line, row: line === null ? null : line - 1, column, message });
  };
  const lines = text.replace(/^\uFEFF/, "").split(/\r\n|\n|\r/);
  const headerIndex = lines.findIndex((l) => l.trim() !== "" && !l.startsWith("#"));
  if (headerIndex < 0) {
    issue("empty-file", "error", null, null, "the file is empty; expected a header line from,to,share and one line per pair");
    return { pairs: [], issues };
  }
  const headerLine = lines[headerIndex];
  const delimiter = [",", ";", "\t"].map((d) => ({ d, n: headerLine.split(d).length })).sort((a, b) => b.n - a.n)[0].d;
  const header = splitCsvLine(headerLine, delimiter).map((h) => h.toLowerCase());
  const col = { from: header.indexOf("from"), to: header.indexOf("to"), share: header.indexOf("share") };
  const missing = (Object.keys(col) as (keyof typeof col)[]).filter((k) => col[k] < 0);
  if (missing.length > 0) {
    issue("header", "error", headerIndex + 1, null, `line ${headerIndex + 1}: the header lacks the column${missing.length > 1 ? "s" : ""} ${missing.map((m) => `'${m}'`).join(", ")}; expected from,to,share`);
    return { pairs: [], issues };
  }
  const fromSet = new Set(fromCodes);
  const toSet = new Set(toCodes);
  const pairs: CrosswalkPair[] = [];
  const seen = new Map<string, number>();
  const firstLineOf = new Map<string, number>();
  const sums = new Map<string, number>();
  for (let i = headerIndex + 1; i < lines.length; i += 1) {
    const raw = lines[i];
    if (raw.trim() === "" || raw.startsWith("#")) continue;
    const line = i + 1;
    const cells = splitCsvLine(raw, delimiter);
    if (cells.length < header.length) {
      issue("columns", "error", line, null, `line ${line}: ${cells.length} cell${cells.length === 1 ? "" : "s"} where the header has ${header.length}`);
      continue;
    }
    const from = cells[col.from];
    const to = cells[col.to];
    const shareText = cells[col.share];
    let bad = false;
    if (!fromSet.has(from)) {
      issue("unknown-from", "error", line, "from", `line ${line}: '${from}' is not a region of the source boundaries`);
      bad = true;
    }
    if (!toSet.has(to)) {
      issue("unknown-to", "error", line, "to", `line ${line}: '${to}' is not a region of the target boundaries`);
      bad = true;
    }
    const share = /^[+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?$/.test(shareText) ? Number(shareText) : Number.NaN;
    if (!(share > 0 && share <= 1)) {
      issue("bad-share", "error", line, "share", `line ${line}: share '${shareText}' is not a number greater than 0 and at most 1`);
      bad = true;
    }
    const key = `${from}\u0000${to}`;
    const earlier = seen.get(key);
    if (earlier !== undefined) {
      issue("duplicate-pair", "error", line, null, `line ${line}: the pair ${from} → ${to} was already given on line ${earlier}`);
      continue;
    }
    seen.set(key, line);
    if (bad) continue;
    if (!firstLineOf.has(from)) firstLineOf.set(from, line);
    sums.set(from, (sums.get(from) ?? 0) + share);
    pairs.push({ from, to, share });
  }
  for (const [from, sum] of sums) {
    if (Math.abs(sum - 1) > SHARE_SUM_TOLERANCE) {
      const line = firstLineOf.get(from) ?? null;
      issue("shares-sum", "error", line, "share", `line ${line}: the shares of '${from}' sum to ${Number(sum.toFixed(6))}, not 1 (within ${SHARE_SUM_TOLERANCE})`);
    }
  }
  for (const code of fromCodes) {
    if (!sums.has(code)) issue("unmatched-from", "warning", null, "from", `source region '${code}' has no pair: its values are not carried over`);
  }
  const reached = new Set(pairs.map((p) => p.to));
  for (const code of toCodes) {
    if (!reached.has(code)) issue("uncovered-to", "warning", null, "to", `target region '${code}' is reached by no pair: it will have no values`);
  }
  return { pairs, issues };
}
