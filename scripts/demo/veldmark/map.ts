/**
 * The invented map of Veldmark: a mainland of jittered-grid Voronoi districts,
 * a denser cluster around the (invented) capital, one small archipelago island
 * split into three districts, and two single-district islets (which have no
 * contiguity neighbours: the demo of the islands policy).
 */
import { blob, centroid, clippedVoronoi, pointInPolygon, signedArea, VertexRegistry, type Point, type Ring } from "./geometry";
import { SeededRandom } from "./random";

export interface District {
  ring: Ring;
  centroid: Point;
  areaKm2: number;
  /** Which landmass: "mainland", or the island's label. */
  landmass: string;
}

export interface VeldmarkMap {
  coastline: Ring;
  districts: District[];
  /** Where the invented capital and the north-eastern shipyard are. */
  capital: Point;
  shipyard: Point;
}

export interface MapOptions {
  /** Districts wanted on the mainland (islands add 5). */
  mainlandDistricts: number;
}

// The map sits far from the origin so its coordinates can never be taken for degrees.
const CENTER: Point = [700, 600];
const BASE_RADIUS = 260;
const STRETCH_X = 1.25;
// Amplitudes of harmonics k = 2, 3, …: large bays and capes first, then a ragged shore.
const COAST_HARMONICS = [0.12, 0.08, 0.06, 0.045, 0.035, 0.028, 0.022, 0.018, 0.015, 0.012, 0.01, 0.009, 0.008, 0.007, 0.006, 0.006, 0.005, 0.005, 0.004, 0.004, 0.004, 0.003, 0.003, 0.003];

function jitteredGrid(random: SeededRandom, land: Ring, spacing: number): Point[] {
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
  const rowHeight = (spacing * Math.sqrt(3)) / 2;
  const points: Point[] = [];
  for (let row = 0, y = y0; y <= y1; row += 1, y += rowHeight) {
    for (let x = x0 + (row % 2) * (spacing / 2); x <= x1; x += spacing) {
      const point: Point = [x + random.between(-0.3, 0.3) * spacing, y + random.between(-0.3, 0.3) * rowHeight];
      if (pointInPolygon(point, land)) points.push(point);
    }
  }
  return points;
}

/** Points for the mainland: a jittered hexagonal grid whose spacing is searched so the count is near the target. */
function mainlandSites(random: SeededRandom, land: Ring, target: number, capital: Point): Point[] {
  const area = Math.abs(signedArea(land));
  const urban = 10;
  let spacing = Math.sqrt(area / ((target - urban) * (Math.sqrt(3) / 2)));
  let points: Point[] = [];
  // Draw with a fresh fork of the stream per attempt so the search stays deterministic.
  const state = random.uniform();
  for (let attempt = 0; attempt < 40; attempt += 1) {
    const attemptRandom = forkRandom(state, attempt);
    points = jitteredGrid(attemptRandom, land, spacing);
    const drop = points.filter((p) => Math.hypot(p[0] - capital[0], p[1] - capital[1]) < spacing * 1.2).length;
    const count = points.length - drop + urban;
    if (Math.abs(count - target) <= 2) break;
    spacing *= Math.sqrt(count / target);
  }
  // A denser ring of small districts around the capital, as cities have.
  const rural = points.filter((p) => Math.hypot(p[0] - capital[0], p[1] - capital[1]) >= spacing * 1.2);
  const urbanPoints: Point[] = [capital];
  for (let k = 0; k < urban - 1; k += 1) {
    const angle = (2 * Math.PI * k) / (urban - 1) + random.between(-0.2, 0.2);
    const radius = spacing * random.between(0.55, 0.75);
    urbanPoints.push([capital[0] + radius * Math.cos(angle), capital[1] + radius * Math.sin(angle)]);
  }
  return [...rural, ...urbanPoints];
}

/** A deterministic sub-stream: the parent drew `state` once; each attempt derives its own seed from it. */
function forkRandom(state: number, attempt: number): SeededRandom {
  return new SeededRandom((Math.floor(state * 0x7fffffff) ^ Math.imul(attempt + 1, 0x9e3779b1)) >>> 0);
}

/** Builds the map. Throws when a district cannot be cut cleanly (see clippedVoronoi). */
export function buildMap(random: SeededRandom, options: MapOptions): VeldmarkMap {
  const coastline = blob(random, CENTER, BASE_RADIUS, { vertices: 540, stretchX: STRETCH_X, harmonics: COAST_HARMONICS });
  // The capital sits inland in the south-west; the shipyard on the north-eastern coast.
  const capital: Point = [CENTER[0] - 0.4 * BASE_RADIUS * STRETCH_X, CENTER[1] - 0.3 * BASE_RADIUS];
  let shipyard = coastline[0];
  for (const point of coastline) {
    if (point[0] - CENTER[0] + (point[1] - CENTER[1]) * STRETCH_X > shipyard[0] - CENTER[0] + (shipyard[1] - CENTER[1]) * STRETCH_X) shipyard = point;
  }
  const registry = new VertexRegistry(1e-6);
  const sites = mainlandSites(random, coastline, options.mainlandDistricts, capital);
  const districts: District[] = clippedVoronoi(sites, coastline, registry).map(({ ring }) => describe(ring, "mainland"));

  // Islands offshore: west (three districts), south-east and north (one each).
  const islands: { label: string; angle: number; radius: number; districts: number }[] = [
    { label: "western isle", angle: Math.PI * 0.97, radius: 34, districts: 3 },
    { label: "south-eastern islet", angle: -Math.PI * 0.3, radius: 11, districts: 1 },
    { label: "northern islet", angle: Math.PI * 0.55, radius: 9, districts: 1 },
  ];
  for (const island of islands) {
    const direction: Point = [Math.cos(island.angle), Math.sin(island.angle)];
    // Walk out from the centre until clear of the coast, then add a strait.
    let distance = BASE_RADIUS * 0.5;
    while (pointInPolygon([CENTER[0] + direction[0] * distance * STRETCH_X, CENTER[1] + direction[1] * distance], coastline)) distance += 2;
    distance += island.radius * 1.6 + 18;
    const center: Point = [CENTER[0] + direction[0] * distance * STRETCH_X, CENTER[1] + direction[1] * distance];
    const land = blob(random, center, island.radius, { vertices: 48, stretchX: 1.3, harmonics: [0.12, 0.06, 0.03] });
    const islandSites: Point[] = [];
    for (let k = 0; k < island.districts; k += 1) {
      const angle = (2 * Math.PI * k) / island.districts + random.between(-0.3, 0.3);
      const r = island.districts === 1 ? 0 : island.radius * 0.5;
      islandSites.push([center[0] + r * 1.3 * Math.cos(angle), center[1] + r * Math.sin(angle)]);
    }
    for (const { ring } of clippedVoronoi(islandSites, land, registry)) districts.push(describe(ring, island.label));
  }
  return { coastline, districts, capital, shipyard };
}

function describe(ring: Ring, landmass: string): District {
  return { ring, centroid: centroid(ring), areaKm2: Math.abs(signedArea(ring)), landmass };
}
