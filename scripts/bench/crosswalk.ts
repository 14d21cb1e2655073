/**
 * Crosswalk benchmark: an area-weighted crosswalk between two generated
 * boundary versions of N regions each (default 3,000): Voronoi partitions of the
 * same 1,000 × 1,000 km square from two independent seeded point sets, passed
 * as GeoJSON text through the intake loader as a user's files would be.
 *
 *   npx tsx scripts/bench/crosswalk.ts [--json] [--regions N]
 *
 * Reports the crosswalk's wall time, the number of pairs and of box-index
 * candidates clipped, and peak resident memory. A benchmark, not a test: nothing
 * fails on time.
 */
import { Delaunay } from "d3-delaunay";
import { areaCrosswalk } from "../../lib/geometry/crosswalk";
import { loadBoundaries } from "../../lib/intake";

function parseArgs(argv: string[]): { json: boolean; regions: number } {
  let json = false;
  let regions = 3000;
  for (let i = 0; i < argv.length; i += 1) {
    if (argv[i] === "--json") json = true;
    else if (argv[i] === "--regions" && /^\d+$/.test(argv[i + 1] ?? "")) regions = Number(argv[(i += 1)]);
    else {
      process.stderr.write(`bench/crosswalk: unknown argument '${argv[i]}'; usage: [--json] [--regions N]\n`);
      process.exit(2);
    }
  }
  return { json, regions };
}

/** A seeded linear congruential generator (Numerical Recipes constants): the same files every run. */
function generator(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 2 ** 32;
  };
}

function voronoiGeoJson(n: number, seed: number, prefix: string): string {
  const random = generator(seed);
  const points = Array.from({ length: n }, () => [random() * 1000, random() * 1000] as [number, number]);
  const diagram = Delaunay.from(points).voronoi([0, 0, 1000, 1000]);
  const features = points.map((_, i) => ({
    type: "Feature",
    properties: { code: `${prefix}${i}` },
    geometry: { type: "Polygon", coordinates: [diagram.cellPolygon(i)] },
  }));
  return JSON.stringify({ type: "FeatureCollection", features });
}

const { json, regions } = parseArgs(process.argv.slice(2));
const oldText = voronoiGeoJson(regions, 20261204, "old");
const newText = voronoiGeoJson(regions, 20270101, "new");
const started = performance.now();
const from = { boundaries: loadBoundaries(oldText), objectName: "regions", idProperty: "code" };
const to = { boundaries: loadBoundaries(newText), objectName: "regions", idProperty: "code" };
const loaded = performance.now();
// Planar kilometres inside the degree ranges would be detected as lon/lat: say so.
const xw = areaCrosswalk(from, to, { coordinates: "planar" });
const done = performance.now();
const shareSums = new Map<string, number>();
for (const p of xw.pairs) shareSums.set(p.from, (shareSums.get(p.from) ?? 0) + p.share);
const worstSum = Math.max(...[...shareSums.values()].map((s) => Math.abs(s - 1)));
const result = {
  regions,
  pairs: xw.pairs.length,
  droppedSlivers: xw.droppedSlivers.length,
  loadMs: Math.round(loaded - started),
  crosswalkMs: Math.round(done - loaded),
  worstShareSumError: worstSum,
  peakRssMb: Math.round(process.resourceUsage().maxRSS / 1024),
};
if (json) console.log(JSON.stringify(result));
else
  console.log(
    `crosswalk ${regions} × ${regions} Voronoi regions: ${result.crosswalkMs} ms (loading ${result.loadMs} ms), ${result.pairs} pairs, ` +
      `${result.droppedSlivers} slivers dropped, worst |Σ shares − 1| ${worstSum.toExponential(1)}, peak RSS ${result.peakRssMb} MB`,
  );
