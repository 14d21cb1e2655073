/**
 * The invented 2019 district reform of Veldmark, made from the demo districts
 * (seeders/data/veldmark/veldmark.topojson): three pairs of neighbouring
 * mainland districts merge (the union of their polygons) and one district is
 * cut in two along the north–south line through its centre. Deterministic:
 * the same districts always give the same reform.
 */
import { feature, mergeArcs, neighbors } from "topojson-client";
import { topology as toTopology } from "topojson-server";
import type { Feature, FeatureCollection, MultiPolygon, Polygon, Position } from "geojson";
import type { GeometryCollection, GeometryObject, Topology } from "topojson-specification";
import { SeededRandom } from "./random";

/** The demo workspace's names for the reformed districts and the panel on them (scripts/demo/seed-demo-reform.ts). */
export const REFORM_BOUNDARY_SET = "Veldmark districts (2019 reform)";
export const REFORM_PANEL = "Veldmark indicators on the 2019 districts";

/** The districts that merge with their lowest-numbered free mainland neighbour, and the one that splits. */
export const REFORM_MERGE_SEEDS = ["VM-040", "VM-120", "VM-160"] as const;
export const REFORM_SPLIT = "VM-200";

export interface VeldmarkReform {
  topology: Topology;
  merged: { code: string; name: string; from: string[] }[];
  split: { from: string; to: string[] };
}

type Props = { code: string; name: string; province?: string; provinceName?: string; landmass?: string };

/** Sutherland–Hodgman against one half-plane x ≤ cut (side −1) or x ≥ cut (side 1). */
function halfPlane(ring: Position[], cut: number, side: 1 | -1): Position[] {
  const out: Position[] = [];
  const inside = (p: Position) => side * (p[0] - cut) >= 0;
  for (let i = 0; i < ring.length; i += 1) {
    const current = ring[i];
    const previous = ring[(i + ring.length - 1) % ring.length];
    if (inside(current) !== inside(previous)) {
      const t = (cut - previous[0]) / (current[0] - previous[0]);
      out.push([cut, Math.round((previous[1] + t * (current[1] - previous[1])) * 1000) / 1000]);
    }
    if (inside(current)) out.push(current);
  }
  return out;
}

export function buildReform(base: Topology): VeldmarkReform {
  const geometries = (base.objects.districts as GeometryCollection<Props>).geometries as (GeometryObject<Props> & { properties: Props })[];
  const codeIndex = new Map(geometries.map((g, i) => [g.properties.code, i]));
  const neighbourLists = neighbors(geometries as GeometryObject[]);
  const used = new Set<number>();
  const merged: VeldmarkReform["merged"] = [];
  const features: Feature<Polygon | MultiPolygon, Props>[] = [];
  const mergedGroups: number[][] = [];
  for (const seed of REFORM_MERGE_SEEDS) {
    const i = codeIndex.get(seed);
    if (i === undefined) throw new Error(`the demo districts have no ${seed}`);
    const j = [...neighbourLists[i]].sort((a, b) => a - b).find((n) => !used.has(n) && geometries[n].properties.landmass === "mainland" && geometries[n].properties.code !== REFORM_SPLIT);
    if (j === undefined) throw new Error(`${seed} has no free mainland neighbour to merge with`);
    used.add(i);
    used.add(j);
    mergedGroups.push([i, j]);
  }
  const splitIndex = codeIndex.get(REFORM_SPLIT);
  if (splitIndex === undefined || used.has(splitIndex)) throw new Error(`${REFORM_SPLIT} cannot be split`);
  geometries.forEach((g, i) => {
    if (used.has(i) || i === splitIndex) return;
    const f = feature(base, g as GeometryObject) as unknown as Feature<Polygon | MultiPolygon>;
    features.push({ type: "Feature", properties: { code: g.properties.code, name: g.properties.name }, geometry: f.geometry });
  });
  mergedGroups.forEach((group, k) => {
    const members = group.map((i) => geometries[i]);
    const geometry = feature(base, mergeArcs(base, members as Parameters<typeof mergeArcs>[1])) as unknown as Feature<Polygon | MultiPolygon>;
    const code = `VM-M${String(k + 1).padStart(2, "0")}`;
    const name = members.map((m) => m.properties.name).join("-");
    merged.push({ code, name, from: members.map((m) => m.properties.code) });
    features.push({ type: "Feature", properties: { code, name }, geometry: geometry.geometry ?? (geometry as unknown as Polygon | MultiPolygon) });
  });
  const splitFeature = feature(base, geometries[splitIndex] as GeometryObject) as unknown as Feature<Polygon>;
  const ring = splitFeature.geometry.coordinates[0].slice(0, -1);
  const xs = ring.map((p) => p[0]);
  const cut = Math.round(((Math.min(...xs) + Math.max(...xs)) / 2) * 1000) / 1000;
  const splitName = geometries[splitIndex].properties.name;
  const halves = ([[-1, "W", "West"], [1, "E", "East"]] as const).map(([side, suffix, word]) => {
    const half = halfPlane(ring, cut, side);
    const code = `${REFORM_SPLIT}${suffix}`;
    features.push({ type: "Feature", properties: { code, name: `${splitName} ${word}` }, geometry: { type: "Polygon", coordinates: [[...half, half[0]]] } });
    return code;
  });
  const collection: FeatureCollection<Polygon | MultiPolygon, Props> = { type: "FeatureCollection", features };
  return { topology: toTopology({ districts: collection }) as unknown as Topology, merged, split: { from: REFORM_SPLIT, to: halves } };
}

/** The first year observed on the reformed districts: earlier years exist on the old districts only. */
export const REFORM_YEAR = 2019;
/** The part of VM-200's working-age residents living in its western half (the district town lies there). */
export const SPLIT_WEST_SHARE = 0.58;
const SPLIT_SEED = 20190101;
const COUNTS = ["business_closures", "working_age_population"] as const;
const POPULATION = "working_age_population";
const UPPER_BOUND: Record<string, number> = { broadband_coverage: 100 };

/**
 * The statistics office's figures on the reformed districts for REFORM_YEAR
 * onwards, as a long panel CSV with the demo panel's `# rate:` line: what
 * Veldmark publishes after the reform, made from the same demo figures.
 * Unchanged districts keep their figures; a merged district's counts are the
 * sums of its two old districts and its other figures their means weighted by
 * working-age population (the office aggregates people, not area); the two
 * halves of the split district share its residents SPLIT_WEST_SHARE to the
 * west, and each figure of the west half differs from the old district's by a
 * seeded few per cent, the east half's so that their population-weighted
 * mean is the old district's. A merged or split figure is missing when an
 * old district's is. Deterministic: the same panel gives the same file.
 */
export function continuationPanel(panelCsv: string, reform: VeldmarkReform, fromYear = REFORM_YEAR): string {
  const lines = panelCsv.split(/\r?\n/);
  const rateLines = lines.filter((l) => l.startsWith("# rate:"));
  const header = lines.findIndex((l) => l.startsWith("region,"));
  if (header < 0 || lines[header] !== "region,period,indicator,value") throw new Error("the demo panel is not a long region,period,indicator,value file");
  // cells[indicator][year][region] = the value as written ("" = missing)
  const cells = new Map<string, Map<number, Map<string, string>>>();
  const decimals = new Map<string, number>();
  for (const line of lines.slice(header + 1)) {
    if (!line) continue;
    const [region, period, indicator, value] = line.split(",");
    const year = Number(period);
    if (year < fromYear) continue;
    const byYear = cells.get(indicator) ?? new Map<number, Map<string, string>>();
    cells.set(indicator, byYear);
    const byRegion = byYear.get(year) ?? new Map<string, string>();
    byYear.set(year, byRegion);
    byRegion.set(region, value);
    if (value) decimals.set(indicator, Math.max(decimals.get(indicator) ?? 0, value.includes(".") ? value.split(".")[1].length : 0));
  }
  const years = [...new Set([...cells.values()].flatMap((byYear) => [...byYear.keys()]))].sort((a, b) => a - b);
  if (years.length === 0) throw new Error(`the demo panel has no year from ${fromYear} on`);
  const population = cells.get(POPULATION);
  if (!population) throw new Error(`the demo panel has no ${POPULATION}`);
  const format = (indicator: string, value: number | null): string => {
    if (value === null || !Number.isFinite(value)) return "";
    const bounded = Math.min(UPPER_BOUND[indicator] ?? Number.POSITIVE_INFINITY, value);
    return bounded.toFixed(decimals.get(indicator) ?? 0);
  };
  const numberOf = (text: string | undefined): number | null => (text === undefined || text === "" ? null : Number(text));

  const random = new SeededRandom(SPLIT_SEED);
  const indicators = [...cells.keys()];
  // The west half's deviation per indicator and year, drawn in a fixed order.
  const deviation = new Map(indicators.map((code) => [code, new Map(years.map((year) => [year, random.between(-0.06, 0.06)]))]));
  const codes = ((reform.topology.objects.districts as GeometryCollection<{ code: string }>).geometries as { properties: { code: string } }[]).map((g) => g.properties.code);
  const mergedFrom = new Map(reform.merged.map((m) => [m.code, m.from]));
  const [west, east] = reform.split.to;
  const s = SPLIT_WEST_SHARE;

  const out = [...rateLines, "region,period,indicator,value"];
  for (const indicator of indicators) {
    const isCount = (COUNTS as readonly string[]).includes(indicator);
    for (const year of years) {
      const values = cells.get(indicator)?.get(year) ?? new Map<string, string>();
      const people = population.get(year) ?? new Map<string, string>();
      const delta = deviation.get(indicator)?.get(year) ?? 0;
      const parent = numberOf(values.get(reform.split.from));
      let westValue: number | null = null;
      let eastValue: number | null = null;
      if (parent !== null && isCount) {
        westValue = Math.min(parent, Math.round(parent * s * (indicator === POPULATION ? 1 : 1 + delta)));
        eastValue = parent - westValue;
      } else if (parent !== null) {
        westValue = parent * (1 + delta);
        eastValue = parent * (1 - (s * delta) / (1 - s));
      }
      for (const code of codes) {
        let text: string;
        const members = mergedFrom.get(code);
        if (members) {
          const parts = members.map((m) => ({ value: numberOf(values.get(m)), weight: numberOf(people.get(m)) }));
          if (parts.some((p) => p.value === null || p.weight === null)) text = "";
          else if (isCount) text = format(indicator, parts.reduce((sum, p) => sum + (p.value as number), 0));
          else {
            const weight = parts.reduce((sum, p) => sum + (p.weight as number), 0);
            text = format(indicator, parts.reduce((sum, p) => sum + (p.value as number) * (p.weight as number), 0) / weight);
          }
        } else if (code === west) text = format(indicator, westValue);
        else if (code === east) text = format(indicator, eastValue);
        else text = values.get(code) ?? "";
        out.push(`${code},${year},${indicator},${text}`);
      }
    }
  }
  return `${out.join("\n")}\n`;
}
