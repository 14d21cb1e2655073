/**
 * Demo data generator: Veldmark, an invented country (invented data only).
 *
 *   npx tsx scripts/demo/generate-veldmark.ts [--out DIR] [--seed N]
 *
 * Writes, deterministically (same seed → byte-identical files):
 * - veldmark.topojson: object `districts` (id property `code`, plus `name`,
 *   `province`, `provinceName`, `landmass`) and object `provinces` (merged
 *   districts, id property `code`). Planar kilometres (x east, y north), far from
 *   the origin so the coordinates cannot be mistaken for longitude/latitude.
 * - veldmark-panel.csv: long form region,period,indicator,value (2008–2024),
 *   the share of jobs in heavy industry among them (a covariate for runs that
 *   control for it),
 *   after a `# rate:` line declaring business closures per 1,000 working-age
 *   residents (the file carries the two counts; intake derives the rate).
 * - indicators.json: code, label, unit, description, source, higherIsBetter
 *   (and the rate's declaration on the rate).
 */
import { mkdir, writeFile } from "node:fs/promises";
import path from "node:path";
import { mergeArcs, neighbors } from "topojson-client";
import { topology as toTopology } from "topojson-server";
import type { Feature, FeatureCollection, Polygon } from "geojson";
import type { GeometryCollection, GeometryObject, Topology } from "topojson-specification";
import { buildMap, type District } from "./veldmark/map";
import { districtName, provinceName } from "./veldmark/names";
import { SeededRandom } from "./veldmark/random";
import { generateIndicators, INDICATORS, YEARS } from "./veldmark/indicators";
import { generateHeavyIndustry, HEAVY_INDUSTRY, HEAVY_INDUSTRY_META } from "./veldmark/industry";
import { CLOSURE_INDICATORS, CLOSURE_RATE, CLOSURE_RATE_DECLARATION, CLOSURES, WORKING_AGE, generateClosures } from "./veldmark/closures";
import type { Point } from "./veldmark/geometry";

export const DEFAULT_SEED = 20080101;
export const PROVINCE_COUNT = 9;

export interface GenerateOptions {
  seed?: number;
  /** Mainland districts wanted (islands add five). */
  mainlandDistricts?: number;
  /** Years to write (a prefix of 2008–2024 for quick test runs). */
  years?: number;
}

export interface VeldmarkSummary {
  districts: number;
  provinces: number;
  islandDistricts: string[];
  districtsWithoutNeighbours: string[];
  missingCells: number;
  panelRows: number;
  smallestWorkingAge: number;
}

export interface VeldmarkOutput {
  files: Record<"veldmark.topojson" | "veldmark-panel.csv" | "indicators.json", string>;
  summary: VeldmarkSummary;
}

/** Coordinates to the metre: enough for a demo map, and keeps the file small. Identical inputs stay identical. */
const round = (value: number): number => Math.round(value * 1000) / 1000;

function polygonFeature(ring: readonly Point[], properties: Record<string, string>): Feature<Polygon> {
  const rounded: Point[] = [];
  for (const [x, y] of ring) {
    const point: Point = [round(x), round(y)];
    const last = rounded[rounded.length - 1];
    if (!last || last[0] !== point[0] || last[1] !== point[1]) rounded.push(point);
  }
  while (rounded.length > 1 && rounded[0][0] === rounded[rounded.length - 1][0] && rounded[0][1] === rounded[rounded.length - 1][1]) rounded.pop();
  return { type: "Feature", properties, geometry: { type: "Polygon", coordinates: [[...rounded, rounded[0]]] } };
}

function districtTopology(districts: readonly District[], properties: (i: number) => Record<string, string>): Topology {
  const collection: FeatureCollection<Polygon> = {
    type: "FeatureCollection",
    features: districts.map((district, i) => polygonFeature(district.ring, properties(i))),
  };
  return toTopology({ districts: collection }) as unknown as Topology;
}

function geometriesOf(topology: Topology): GeometryObject[] {
  return (topology.objects.districts as GeometryCollection).geometries;
}

/** k-means on district centroids with a farthest-point start (deterministic: no random initialisation). */
function kMeans(points: readonly Point[], k: number): number[] {
  const centres: Point[] = [points.reduce((best, p) => (p[1] > best[1] ? p : best), points[0])];
  while (centres.length < k) {
    let farthest = points[0];
    let farthestDistance = -1;
    for (const p of points) {
      const d = Math.min(...centres.map((c) => Math.hypot(p[0] - c[0], p[1] - c[1])));
      if (d > farthestDistance) {
        farthest = p;
        farthestDistance = d;
      }
    }
    centres.push(farthest);
  }
  let assignment = points.map(() => 0);
  for (let iteration = 0; iteration < 50; iteration += 1) {
    assignment = points.map((p) => {
      let best = 0;
      for (let c = 1; c < k; c += 1) {
        if (Math.hypot(p[0] - centres[c][0], p[1] - centres[c][1]) < Math.hypot(p[0] - centres[best][0], p[1] - centres[best][1])) best = c;
      }
      return best;
    });
    for (let c = 0; c < k; c += 1) {
      const members = points.filter((_, i) => assignment[i] === c);
      if (members.length > 0) centres[c] = [members.reduce((s, p) => s + p[0], 0) / members.length, members.reduce((s, p) => s + p[1], 0) / members.length];
    }
  }
  return assignment;
}

/** Generates the three demo files in memory. */
export function generateVeldmark(options: GenerateOptions = {}): VeldmarkOutput {
  const random = new SeededRandom(options.seed ?? DEFAULT_SEED);
  const map = buildMap(random, { mainlandDistricts: options.mainlandDistricts ?? 235 });
  const { districts } = map;

  // Provinces: k-means on mainland centroids; islands join the nearest province centre.
  const mainland = districts.map((d, i) => ({ d, i })).filter(({ d }) => d.landmass === "mainland");
  const mainlandProvince = kMeans(mainland.map(({ d }) => d.centroid), PROVINCE_COUNT);
  const province = districts.map(() => -1);
  mainland.forEach(({ i }, m) => (province[i] = mainlandProvince[m]));
  const provinceCentre = Array.from({ length: PROVINCE_COUNT }, (_, p) => {
    const members = mainland.filter((_, m) => mainlandProvince[m] === p).map(({ d }) => d.centroid);
    return [members.reduce((s, c) => s + c[0], 0) / members.length, members.reduce((s, c) => s + c[1], 0) / members.length] as Point;
  });
  districts.forEach((d, i) => {
    if (province[i] >= 0) return;
    let best = 0;
    provinceCentre.forEach((c, p) => {
      if (Math.hypot(d.centroid[0] - c[0], d.centroid[1] - c[1]) < Math.hypot(d.centroid[0] - provinceCentre[best][0], d.centroid[1] - provinceCentre[best][1])) best = p;
    });
    province[i] = best;
  });
  // A district cut off from its province (no neighbour in it) joins its neighbours' province, so provinces stay contiguous.
  const preliminary = neighbors(geometriesOf(districtTopology(districts, () => ({}))));
  for (let pass = 0; pass < 3; pass += 1) {
    preliminary.forEach((list, i) => {
      if (list.length === 0 || list.some((j) => province[j] === province[i])) return;
      const counts = new Map<number, number>();
      for (const j of list) counts.set(province[j], (counts.get(province[j]) ?? 0) + 1);
      province[i] = [...counts.entries()].sort((a, b) => b[1] - a[1] || a[0] - b[0])[0][0];
    });
  }

  // Order provinces north to south, districts by province then north to south in 40 km bands, west to east.
  const provinceOrder = provinceCentre.map((c, p) => ({ c, p })).sort((a, b) => b.c[1] - a.c[1] || a.c[0] - b.c[0]).map(({ p }) => p);
  const provinceRank = new Map(provinceOrder.map((p, rank) => [p, rank]));
  const order = districts
    .map((d, i) => ({ d, i }))
    .sort((a, b) => {
      const pa = provinceRank.get(province[a.i]) ?? 0;
      const pb = provinceRank.get(province[b.i]) ?? 0;
      return pa - pb || Math.floor(b.d.centroid[1] / 40) - Math.floor(a.d.centroid[1] / 40) || a.d.centroid[0] - b.d.centroid[0];
    })
    .map(({ i }) => i);
  const ordered = order.map((i) => districts[i]);
  const orderedProvince = order.map((i) => provinceRank.get(province[i]) ?? 0);

  const names = new Set<string>();
  const provinceNames = provinceOrder.map(() => provinceName(random, names));
  const provinceCodes = provinceOrder.map((_, rank) => `VM-P${String(rank + 1).padStart(2, "0")}`);
  const codes = ordered.map((_, i) => `VM-${String(i + 1).padStart(3, "0")}`);
  const districtNames = ordered.map(() => districtName(random, names));

  const topology = districtTopology(ordered, (i) => ({
    code: codes[i],
    name: districtNames[i],
    province: provinceCodes[orderedProvince[i]],
    provinceName: provinceNames[orderedProvince[i]],
    landmass: ordered[i].landmass,
  }));
  const geometries = geometriesOf(topology);
  const neighbourLists = neighbors(geometries).map((list) => [...list].sort((a, b) => a - b));
  const provinceGeometries = provinceCodes.map((code, rank) => {
    const members = geometries.filter((_, i) => orderedProvince[i] === rank);
    const merged = mergeArcs(topology, members as Parameters<typeof mergeArcs>[1]);
    return { ...merged, properties: { code, name: provinceNames[rank] } };
  });
  topology.objects.provinces = { type: "GeometryCollection", geometries: provinceGeometries } as GeometryCollection;

  // Single-district islands: figures suppressed in some years (small bases), the demo's missing values.
  const islandDistricts = ordered.map((d, i) => ({ d, i })).filter(({ d }) => d.landmass !== "mainland");
  const islets = islandDistricts.filter(({ i }) => neighbourLists[i].length === 0).map(({ i }) => i);
  const missingPlan: Record<string, (year: number) => boolean> = {
    median_household_income: (year) => year <= 2010,
    business_births_per_1000: (year) => year % 4 === 1,
    broadband_coverage: (year) => year <= 2009,
    youth_unemployment_rate: (year) => year === 2016,
  };
  const isMissing = (indicator: string, year: number, i: number): boolean => {
    const islet = islets.indexOf(i);
    if (islet < 0) return false;
    // The first islet loses income and broadband years, the second business births and one youth figure.
    const mine = islet === 0 ? ["median_household_income", "broadband_coverage"] : ["business_births_per_1000", "youth_unemployment_rate"];
    return mine.includes(indicator) && (missingPlan[indicator]?.(year) ?? false);
  };

  const closeness = (target: Point, sd: number): number[] =>
    ordered.map((d) => Math.exp(-((d.centroid[0] - target[0]) ** 2 + (d.centroid[1] - target[1]) ** 2) / (2 * sd * sd)));
  const { values, decimals } = generateIndicators(
    random,
    { neighbours: neighbourLists, capital: closeness(map.capital, 90), shipyard: closeness(map.shipyard, 75) },
    isMissing,
  );

  // The counts behind the rate come from a stream of their own: the indicators above keep their values.
  const counts = generateClosures(
    new SeededRandom((options.seed ?? DEFAULT_SEED) + 1),
    { neighbours: neighbourLists, capital: closeness(map.capital, 90), shipyard: closeness(map.shipyard, 75) },
    ordered.map((d) => d.landmass !== "mainland"),
  );

  // The covariate (share of jobs in heavy industry) from a third stream of its own.
  const heavyIndustry = generateHeavyIndustry(new SeededRandom((options.seed ?? DEFAULT_SEED) + 2), {
    neighbours: neighbourLists,
    capital: closeness(map.capital, 90),
    shipyard: closeness(map.shipyard, 75),
  });

  const years = YEARS.slice(0, options.years ?? YEARS.length);
  const { events, population, multiplier } = CLOSURE_RATE_DECLARATION;
  const lines = [`# rate: ${CLOSURE_RATE} = ${events} / ${population} * ${multiplier}`, "region,period,indicator,value"];
  let missingCells = 0;
  for (const meta of INDICATORS) {
    for (const year of years) {
      values[meta.code][year].forEach((value, i) => {
        if (value === null) missingCells += 1;
        // Missing values are written as empty cells, which intake counts as missing (never zero).
        lines.push(`${codes[i]},${year},${meta.code},${value === null ? "" : value.toFixed(decimals[meta.code])}`);
      });
    }
  }
  for (const year of years) heavyIndustry[year].forEach((value, i) => lines.push(`${codes[i]},${year},${HEAVY_INDUSTRY},${value.toFixed(1)}`));
  for (const [code, values] of [
    [CLOSURES, counts.closures],
    [WORKING_AGE, counts.population],
  ] as const) {
    for (const year of years) values[year].forEach((value, i) => lines.push(`${codes[i]},${year},${code},${value}`));
  }

  return {
    files: {
      "veldmark.topojson": `${JSON.stringify(topology)}\n`,
      "veldmark-panel.csv": `${lines.join("\n")}\n`,
      "indicators.json": `${JSON.stringify([...INDICATORS, HEAVY_INDUSTRY_META, ...CLOSURE_INDICATORS], null, 2)}\n`,
    },
    summary: {
      districts: ordered.length,
      provinces: provinceCodes.length,
      islandDistricts: islandDistricts.map(({ i }) => codes[i]),
      districtsWithoutNeighbours: neighbourLists.flatMap((list, i) => (list.length === 0 ? [codes[i]] : [])),
      missingCells,
      // The rate line and the header are not rows.
      panelRows: lines.length - 2,
      smallestWorkingAge: Math.min(...years.flatMap((year) => counts.population[year])),
    },
  };
}

async function main(argv: string[]): Promise<void> {
  let out = path.join("seeders", "data", "veldmark");
  let seed = DEFAULT_SEED;
  for (let i = 0; i < argv.length; i += 1) {
    if (argv[i] === "--out" && argv[i + 1]) out = argv[(i += 1)];
    else if (argv[i] === "--seed" && argv[i + 1] && /^\d+$/.test(argv[i + 1])) seed = Number(argv[(i += 1)]);
    else {
      process.stderr.write(`generate-veldmark: unknown or incomplete argument '${argv[i]}'; usage: [--out DIR] [--seed N]\n`);
      process.exitCode = 2;
      return;
    }
  }
  const { files, summary } = generateVeldmark({ seed });
  await mkdir(out, { recursive: true });
  for (const [name, content] of Object.entries(files)) await writeFile(path.join(out, name), content);
  process.stdout.write(`${JSON.stringify({ out, ...summary }, null, 2)}\n`);
}

// Run only when executed directly (the determinism test imports generateVeldmark).
if (process.argv[1] && path.resolve(process.argv[1]).endsWith(path.join("scripts", "demo", "generate-veldmark.ts"))) {
  main(process.argv.slice(2)).catch((error: unknown) => {
    process.stderr.write(`generate-veldmark: ${error instanceof Error ? error.message : String(error)}\n`);
    process.exitCode = 1;
  });
}
