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
