/**
 * Planar geometry for the invented map of Veldmark (kilometres, x east, y north).
 *
 * Districts are Voronoi cells of jittered points, clipped to an invented
 * coastline. Contiguity weights need neighbouring cells to share exactly the
 * same vertex coordinates: unclipped Voronoi cells already do (both take the
 * same circumcentres from d3-delaunay), but a vertex created by clipping is
 * computed separately in each cell and may differ in the last bits. Every
 * vertex is therefore snapped to a registry (tolerance 1e-6 km) so shared
 * borders become identical and topojson-server turns them into shared arcs.
 */
import { Delaunay } from "d3-delaunay";
import type { SeededRandom } from "./random";

export type Point = [number, number];
export type Ring = Point[];

export function signedArea(ring: readonly Point[]): number {
  let sum = 0;
  for (let i = 0; i < ring.length; i += 1) {
    const [x0, y0] = ring[i];
    const [x1, y1] = ring[(i + 1) % ring.length];
    sum += x0 * y1 - x1 * y0;
  }
  return sum / 2;
}

export function centroid(ring: readonly Point[]): Point {
  let cx = 0;
  let cy = 0;
  let area = 0;
  for (let i = 0; i < ring.length; i += 1) {
    const [x0, y0] = ring[i];
    const [x1, y1] = ring[(i + 1) % ring.length];
    const cross = x0 * y1 - x1 * y0;
    area += cross;
    cx += (x0 + x1) * cross;
    cy += (y0 + y1) * cross;
  }
  return [cx / (3 * area), cy / (3 * area)];
}

/** Counter-clockwise copy (exterior rings, as RFC 7946 asks), without the closing point. */
export function counterClockwise(ring: readonly Point[]): Ring {
  const open = ring.length > 1 && ring[0][0] === ring[ring.length - 1][0] && ring[0][1] === ring[ring.length - 1][1] ? ring.slice(0, -1) : [...ring];
  return signedArea(open) < 0 ? open.reverse() : open;
}

export function pointInPolygon(point: Point, ring: readonly Point[]): boolean {
  const [x, y] = point;
  let inside = false;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i, i += 1) {
    const [xi, yi] = ring[i];
    const [xj, yj] = ring[j];
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/**
 * A star-shaped blob: radius r(θ) = base·(1 + Σ a_k cos(kθ + φ_k)), stretched
 * in x. Star-shaped means the ring is always simple. Returned counter-clockwise.
 */
export function blob(
  random: SeededRandom,
  center: Point,
  baseRadius: number,
  options: { vertices: number; stretchX: number; harmonics: readonly number[] },
): Ring {
  const terms = options.harmonics.map((amplitude, k) => ({ k: k + 2, amplitude, phase: random.between(0, 2 * Math.PI) }));
  const ring: Ring = [];
  for (let v = 0; v < options.vertices; v += 1) {
    const theta = (2 * Math.PI * v) / options.vertices;
    let factor = 1;
    for (const term of terms) factor += term.amplitude * Math.cos(term.k * theta + term.phase);
    const radius = baseRadius * Math.max(0.35, factor);
    ring.push([center[0] + options.stretchX * radius * Math.cos(theta), center[1] + radius * Math.sin(theta)]);
  }
  return ring;
}

/**
 * Sutherland–Hodgman: clips `subject` (any simple polygon, here a coastline)
 * by the convex counter-clockwise polygon `clip` (a Voronoi cell). The result
 * can be degenerate when the subject leaves and re-enters the cell; callers
 * check simplicity.
 */
export function clipByConvex(subject: readonly Point[], clip: readonly Point[]): Ring {
  let output: Point[] = [...subject];
  for (let e = 0; e < clip.length && output.length > 0; e += 1) {
    const a = clip[e];
    const b = clip[(e + 1) % clip.length];
    const side = (p: Point): number => (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0]);
    const input = output;
    output = [];
    for (let i = 0; i < input.length; i += 1) {
      const current = input[i];
      const previous = input[(i + input.length - 1) % input.length];
      const sc = side(current);
      const sp = side(previous);
      if (sc >= 0) {
        if (sp < 0) output.push(intersect(previous, current, sp, sc));
        output.push(current);
      } else if (sp >= 0) {
        output.push(intersect(previous, current, sp, sc));
      }
    }
  }
  return output;
}

function intersect(p: Point, q: Point, sp: number, sq: number): Point {
  const t = sp / (sp - sq);
  return [p[0] + (q[0] - p[0]) * t, p[1] + (q[1] - p[1]) * t];
}

/** Snaps near-identical vertices (within `tolerance`) to the first one registered. */
export class VertexRegistry {
  private readonly buckets = new Map<string, Point[]>();
  constructor(private readonly tolerance: number) {}

  snap(point: Point): Point {
    const gx = Math.floor(point[0] / this.tolerance);
    const gy = Math.floor(point[1] / this.tolerance);
    for (let dx = -1; dx <= 1; dx += 1) {
      for (let dy = -1; dy <= 1; dy += 1) {
        const bucket = this.buckets.get(`${gx + dx},${gy + dy}`);
        if (!bucket) continue;
        for (const candidate of bucket) {
          if (Math.abs(candidate[0] - point[0]) <= this.tolerance && Math.abs(candidate[1] - point[1]) <= this.tolerance) return candidate;
        }
      }
    }
    const key = `${gx},${gy}`;
    const bucket = this.buckets.get(key);
    if (bucket) bucket.push(point);
    else this.buckets.set(key, [point]);
    return point;
  }
}

function segmentsCross(a: Point, b: Point, c: Point, d: Point): boolean {
  const orient = (p: Point, q: Point, r: Point): number => (q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]);
  const d1 = orient(c, d, a);
  const d2 = orient(c, d, b);
  const d3 = orient(a, b, c);
  const d4 = orient(a, b, d);
  return ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0));
}

/** True when no two non-adjacent edges cross and no vertex repeats (O(m²), rings here are small). */
export function isSimple(ring: readonly Point[]): boolean {
  const seen = new Set<string>();
  for (const [x, y] of ring) {
    const key = `${x},${y}`;
    if (seen.has(key)) return false;
    seen.add(key);
  }
  const m = ring.length;
  for (let i = 0; i < m; i += 1) {
    for (let j = i + 2; j < m; j += 1) {
      if (i === 0 && j === m - 1) continue;
      if (segmentsCross(ring[i], ring[(i + 1) % m], ring[j], ring[(j + 1) % m])) return false;
    }
  }
  return true;
}

export interface Cell {
  /** Index of the generating point. */
  site: number;
  ring: Ring;
}

/**
 * Voronoi cells of `sites` clipped to `land` (counter-clockwise), with vertices
 * snapped through `registry`. A cell lying wholly inland is kept as d3-delaunay
 * gives it (exact circumcentres); only cells crossing the coast are clipped.
 * @throws Error when a clipped cell is empty or not simple (the coastline
 *   entered a cell twice), naming the site.
 */
export function clippedVoronoi(sites: readonly Point[], land: Ring, registry: VertexRegistry, margin = 200): Cell[] {
  if (sites.length === 1) {
    return [{ site: 0, ring: land.map((p) => registry.snap(p)) }];
  }
  let x0 = Infinity;
  let y0 = Infinity;
  let x1 = -Infinity;
  let y1 = -Infinity;
  for (const [x, y] of land) {
    x0 = Math.min(x0, x);
    y0 = Math.min(y0, y);
    x1 = Math.max(x1, x);
    y1 = Math.max(y1, y);
  }
  const voronoi = Delaunay.from(sites).voronoi([x0 - margin, y0 - margin, x1 + margin, y1 + margin]);
  const cells: Cell[] = [];
  sites.forEach((_, site) => {
    const polygon = voronoi.cellPolygon(site);
    if (!polygon) throw new Error(`site ${site} has no Voronoi cell (duplicate point?)`);
    const cell = counterClockwise(polygon.map(([x, y]) => [x, y] as Point));
    const inland = cell.every((p) => pointInPolygon(p, land)) && !land.some((p) => pointInPolygon(p, cell));
    const raw = inland ? cell : clipByConvex(land, cell);
    const ring: Ring = [];
    for (const point of raw) {
      const snapped = registry.snap(point);
      const last = ring[ring.length - 1];
      if (last !== snapped) ring.push(snapped);
    }
    while (ring.length > 1 && ring[0] === ring[ring.length - 1]) ring.pop();
    if (ring.length < 3 || Math.abs(signedArea(ring)) < 1e-6) throw new Error(`the cell of site ${site} vanished when clipped to the coastline`);
    if (!isSimple(ring)) throw new Error(`the cell of site ${site} is not simple after clipping (the coastline enters it twice); change the seed or smooth the coast`);
    cells.push({ site, ring });
  });
  return cells;
}
