/**
 * Unit tests of the area-weighted crosswalk (lib/geometry/crosswalk.ts) and of
 * harmonisation (lib/geometry/harmonise.ts) on hand-made boundaries whose
 * answers follow from rectangle areas, plus properties on random Voronoi
 * partitions. The outside check against R's sf is crosswalk-reference.test.ts.
 */
import { readFileSync } from "node:fs";
import { Delaunay } from "d3-delaunay";
import fc from "fast-check";
import { merge } from "topojson-client";
import type { GeometryCollection, MultiPolygon, Polygon, Topology } from "topojson-specification";
import { areaCrosswalk, CrosswalkGeometryError, type AreaCrosswalkOptions, type BoundaryLayer } from "@/lib/geometry/crosswalk";
import { harmonise } from "@/lib/geometry/harmonise";
import { BoundaryError, loadBoundaries } from "@/lib/intake/boundaries";
import { CROSSWALK_FILES } from "../../fixtures/crosswalk/fixture";

type Ring = [number, number][];

function rect(x0: number, y0: number, x1: number, y1: number): Ring {
  return [[x0, y0], [x1, y0], [x1, y1], [x0, y1], [x0, y0]];
}

/** A boundary layer of polygons (one ring each) as GeoJSON read through the intake loader. */
function layer(regions: Record<string, Ring>): BoundaryLayer {
  const features = Object.entries(regions).map(([code, ring]) => ({
    type: "Feature",
    properties: { code },
    geometry: { type: "Polygon", coordinates: [ring] },
  }));
  return { boundaries: loadBoundaries(JSON.stringify({ type: "FeatureCollection", features })), objectName: "regions", idProperty: "code" };
}

const PLANAR: AreaCrosswalkOptions = { coordinates: "planar" };

function shareOf(pairs: readonly { from: string; to: string; share: number }[], from: string, to: string): number | undefined {
  return pairs.find((p) => p.from === from && p.to === to)?.share;
}

describe("areaCrosswalk", () => {
  test("a merge: both old districts lie wholly in the new one, shares exactly 1", () => {
    const xw = areaCrosswalk(layer({ A: rect(0, 0, 1, 1), B: rect(1, 0, 3, 1) }), layer({ M: rect(0, 0, 3, 1) }), PLANAR);
    expect(xw.pairs).toEqual([
      { from: "A", to: "M", share: 1, area: 1 },
      { from: "B", to: "M", share: 1, area: 2 },
    ]);
    expect(xw.sources.map((s) => s.coverage)).toEqual([1, 1]);
    expect(xw.targets).toEqual([{ id: "M", area: 3, coverage: 1 }]);
    expect({ unmatchedFrom: xw.unmatchedFrom, uncoveredTo: xw.uncoveredTo, droppedSlivers: xw.droppedSlivers }).toEqual({ unmatchedFrom: [], uncoveredTo: [], droppedSlivers: [] });
  });

  test("a merge of real counties: each North Carolina county lies wholly in its merged group, share exactly 1, no slivers", () => {
    const counties = { boundaries: loadBoundaries(readFileSync(CROSSWALK_FILES.planarCounties, "utf8")), objectName: "regions", idProperty: "FIPSNO" };
    const topology = counties.boundaries.topology as Topology;
    const geometries = (topology.objects.regions as GeometryCollection<{ FIPSNO: number }>).geometries as (Polygon<{ FIPSNO: number }> | MultiPolygon<{ FIPSNO: number }>)[];
    // Twelve "new districts": counties grouped by their code, merged along their shared arcs.
    const group = (fips: number) => `G${Math.floor((fips - 37000) / 17)}`;
    const fipsOf = (g: { properties?: { FIPSNO: number } }) => g.properties!.FIPSNO;
    const groups = [...new Set(geometries.map((g) => group(fipsOf(g))))];
    const features = groups.map((code) => ({ type: "Feature", properties: { code }, geometry: merge(topology, geometries.filter((g) => group(fipsOf(g)) === code)) }));
    const merged = { boundaries: loadBoundaries(JSON.stringify({ type: "FeatureCollection", features })), objectName: "regions", idProperty: "code" };
    // No sliver tolerance: shared arcs are identical, so not even a rounding-sized overlap with a neighbouring group may appear.
    const xw = areaCrosswalk(counties, merged, { ...PLANAR, sliverTolerance: 0 });
    expect(xw.pairs).toHaveLength(geometries.length);
    for (const p of xw.pairs) {
      expect(p.share).toBe(1);
      expect(p.to).toBe(group(Number(p.from)));
    }
    expect({ droppedSlivers: xw.droppedSlivers, unmatchedFrom: xw.unmatchedFrom, uncoveredTo: xw.uncoveredTo }).toEqual({ droppedSlivers: [], unmatchedFrom: [], uncoveredTo: [] });
    expect(xw.targets.every((t) => t.coverage === 1)).toBe(true);
  });

  test("a split: shares are the parts' areas over the whole and sum to 1", () => {
    const xw = areaCrosswalk(layer({ A: rect(0, 0, 4, 1) }), layer({ P: rect(0, 0, 1, 1), Q: rect(1, 0, 4, 1) }), PLANAR);
    expect(shareOf(xw.pairs, "A", "P")).toBeCloseTo(0.25, 15);
    expect(shareOf(xw.pairs, "A", "Q")).toBeCloseTo(0.75, 15);
    expect(xw.pairs.reduce((s, p) => s + p.share, 0)).toBeCloseTo(1, 15);
  });

  test("a redrawn border: the sliver is dropped and reported, and its area goes back to the source's other pairs", () => {
    // The border between A and B moved from x = 1 to x = 1.00001: B loses 1e-5 of its area to A'.
    const xw = areaCrosswalk(layer({ A: rect(0, 0, 1, 1), B: rect(1, 0, 2, 1) }), layer({ A2: rect(0, 0, 1.00001, 1), B2: rect(1.00001, 0, 2, 1) }), PLANAR);
    expect(xw.droppedSlivers).toHaveLength(1);
    expect(xw.droppedSlivers[0]).toMatchObject({ from: "B", to: "A2" });
    expect(xw.droppedSlivers[0].share).toBeCloseTo(1e-5, 12);
    expect(xw.pairs.map(({ from, to, share }) => ({ from, to, share }))).toEqual([
      { from: "A", to: "A2", share: 1 },
      { from: "B", to: "B2", share: 1 },
    ]);
    // With no sliver tolerance the overlap is kept.
    const kept = areaCrosswalk(layer({ B: rect(1, 0, 2, 1) }), layer({ A2: rect(0, 0, 1.00001, 1), B2: rect(1.00001, 0, 2, 1) }), { ...PLANAR, sliverTolerance: 0 });
    expect(shareOf(kept.pairs, "B", "A2")).toBeCloseTo(1e-5, 12);
    expect(kept.droppedSlivers).toEqual([]);
  });

  test("coverage below 1, unmatched sources and uncovered targets are reported", () => {
    const xw = areaCrosswalk(
      layer({ C: rect(0, 0, 2, 1), far: rect(10, 10, 11, 11) }),
      layer({ half: rect(0, 0, 1, 1), empty: rect(20, 20, 21, 21) }),
      PLANAR,
    );
    expect(xw.pairs).toEqual([{ from: "C", to: "half", share: 0.5, area: 1 }]);
    expect(xw.sources).toEqual([
      { id: "C", area: 2, coverage: 0.5 },
      { id: "far", area: 1, coverage: 0 },
    ]);
    expect(xw.unmatchedFrom).toEqual(["far"]);
    expect(xw.uncoveredTo).toEqual(["empty"]);
  });

  test("holes are not counted as area, and a region touching another only along an edge is no pair", () => {
    const donut = { type: "Feature", properties: { code: "D" }, geometry: { type: "Polygon", coordinates: [rect(0, 0, 3, 3), rect(1, 1, 2, 2)] } };
    const from = { boundaries: loadBoundaries(JSON.stringify({ type: "FeatureCollection", features: [donut] })), objectName: "regions", idProperty: "code" };
    const xw = areaCrosswalk(from, layer({ hole: rect(1, 1, 2, 2), left: rect(0, 0, 1, 3), right: rect(3, 0, 4, 3) }), PLANAR);
    expect(xw.sources[0].area).toBe(8);
    expect(xw.pairs.map((p) => [p.to, p.share])).toEqual([["left", 3 / 8]]);
    expect(xw.uncoveredTo).toEqual(["hole", "right"]);
  });

  test("longitude/latitude is detected and areas are on the sphere: a 1° cell's area is R²·Δλ·(sin φ₂ − sin φ₁)", () => {
    const xw = areaCrosswalk(layer({ A: rect(10, 50, 11, 51) }), layer({ S: rect(10, 50, 10.5, 51), N: rect(10.5, 50, 11, 51) }));
    expect({ coordinates: xw.coordinates, detected: xw.coordinatesDetected, unit: xw.areaUnit, radius: xw.earthRadiusKm }).toEqual({ coordinates: "geographic", detected: true, unit: "km²", radius: 6371.0088 });
    // Area of a longitude/latitude rectangle on a sphere (Archimedes' hat-box theorem).
    const R = 6371.0088;
    const rad = Math.PI / 180;
    const expected = R * R * (1 * rad) * (Math.sin(51 * rad) - Math.sin(50 * rad));
    expect(xw.sources[0].area).toBeCloseTo(expected, 6);
    expect(xw.pairs.map((p) => p.share)).toEqual([0.5, 0.5].map((v) => expect.closeTo(v, 14)));
    // Projected coordinates far outside the degree ranges read as planar.
    const planar = areaCrosswalk(layer({ A: rect(500000, 4000000, 501000, 4001000) }), layer({ B: rect(500000, 4000000, 502000, 4001000) }));
    expect({ coordinates: planar.coordinates, area: planar.sources[0].area }).toEqual({ coordinates: "planar", area: 1e6 });
  });

  test("bad inputs name what is wrong", () => {
    expect(() => areaCrosswalk({ ...layer({ A: rect(0, 0, 1, 1) }), idProperty: "nope" }, layer({ B: rect(0, 0, 1, 1) }))).toThrow(BoundaryError);
    const line = { type: "Feature", properties: { code: "L" }, geometry: { type: "LineString", coordinates: [[0, 0], [1, 1]] } };
    const lines = { boundaries: loadBoundaries(JSON.stringify({ type: "FeatureCollection", features: [line] })), objectName: "regions", idProperty: "code" };
    expect(() => areaCrosswalk(lines, layer({ B: rect(0, 0, 1, 1) }))).toThrow(new CrosswalkGeometryError("source region 'L' (feature 1 of object 'regions') is a LineString, not a polygon or multipolygon"));
    expect(() => areaCrosswalk(layer({ A: rect(0, 0, 1, 1) }), layer({ B: rect(0, 0, 1, 1) }), { sliverTolerance: 1 })).toThrow(RangeError);
  });

  test("overlapping targets are flagged", () => {
    const xw = areaCrosswalk(layer({ A: rect(0, 0, 1, 1) }), layer({ X: rect(0, 0, 1, 1), Y: rect(0, 0, 1, 1) }), PLANAR);
    expect(xw.warnings).toEqual(["source 'A' is covered 2.00000000000 times: the target regions overlap"]);
  });
});

/** A Voronoi partition of [0, 100]² from seeded points: cells as closed rings. */
function voronoi(points: readonly [number, number][], prefix: string): Record<string, Ring> {
  const diagram = Delaunay.from(points).voronoi([0, 0, 100, 100]);
  const out: Record<string, Ring> = {};
  points.forEach((_, i) => {
    const cell = diagram.cellPolygon(i);
    if (cell) out[`${prefix}${i}`] = cell as Ring;
  });
  return out;
}

const pointSet = fc.uniqueArray(fc.tuple(fc.integer({ min: 1, max: 999 }), fc.integer({ min: 1, max: 999 })), {
  minLength: 3,
  maxLength: 30,
  selector: ([x, y]) => `${x},${y}`,
}).map((ps) => ps.map(([x, y]) => [x / 10, y / 10] as [number, number]));

describe("crosswalk properties on random Voronoi partitions of one square", () => {
  test("every source is fully covered and its shares sum to 1; extensive totals are conserved", () => {
    fc.assert(
      fc.property(pointSet, pointSet, fc.array(fc.integer({ min: 0, max: 10_000 }), { minLength: 30, maxLength: 30 }), (a, b, counts) => {
        const sources = voronoi(a, "s");
        const xw = areaCrosswalk(layer(sources), layer(voronoi(b, "t")), PLANAR);
        const sums = new Map<string, number>();
        for (const p of xw.pairs) sums.set(p.from, (sums.get(p.from) ?? 0) + p.share);
        for (const s of xw.sources) {
          expect(s.coverage).toBe(1);
          expect(Math.abs((sums.get(s.id) ?? 0) - 1)).toBeLessThanOrEqual(1e-12);
        }
        expect(xw.unmatchedFrom).toEqual([]);
        const values = new Map(Object.keys(sources).map((id, i) => [id, counts[i]]));
        const total = [...values.values()].reduce((s, v) => s + v, 0);
        const harmonised = harmonise(xw.pairs, values, { kind: "extensive" });
        const after = [...harmonised.values.values()].reduce<number>((s, v) => s + (v ?? 0), 0);
        expect(Math.abs(after - total)).toBeLessThanOrEqual(1e-9 * Math.max(1, total));
        // A constant rate stays that constant wherever it is averaged.
        const rate = harmonise(xw.pairs, new Map([...values.keys()].map((id) => [id, 7.25])), { kind: "intensive", weighting: { by: "area" } });
        for (const v of rate.values.values()) expect(v).toBeCloseTo(7.25, 10);
      }),
      { numRuns: 40, seed: 20261204 },
    );
  });
});

describe("harmonise", () => {
  const links = [
    { from: "A", to: "X", share: 1, area: 10 },
    { from: "B", to: "X", share: 0.25, area: 5 },
    { from: "B", to: "Y", share: 0.75, area: 15 },
  ];

  test("extensive: share-weighted sums", () => {
    const h = harmonise(links, new Map([["A", 100], ["B", 40]]), { kind: "extensive" });
    expect(Object.fromEntries(h.values)).toEqual({ X: 110, Y: 30 });
    expect(h.missing).toEqual([]);
  });

  test("intensive by area: the overlap-area-weighted mean over the target's covered part", () => {
    const h = harmonise(links, new Map([["A", 2], ["B", 8]]), { kind: "intensive", weighting: { by: "area" } });
    expect(h.values.get("X")).toBeCloseTo((10 * 2 + 5 * 8) / 15, 14);
    expect(h.values.get("Y")).toBe(8);
  });

  test("intensive by a denominator: weights are the denominator's share-weighted values", () => {
    const labourForce = new Map([["A", 1000], ["B", 4000]]);
    const h = harmonise(links, new Map([["A", 0.05], ["B", 0.1]]), { kind: "intensive", weighting: { by: "denominator", values: labourForce } });
    // X: A brings 1000 · 5 %, a quarter of B brings 1000 · 10 %.
    expect(h.values.get("X")).toBeCloseTo((1000 * 0.05 + 1000 * 0.1) / 2000, 14);
    expect(h.values.get("Y")).toBeCloseTo(0.1, 14);
  });

  test("a missing contributor makes the target missing and is named; uncovered targets are missing too", () => {
    const h = harmonise(links, new Map([["A", 100], ["B", null]]), { kind: "extensive" }, { targets: ["X", "Y", "Z"] });
    expect(Object.fromEntries(h.values)).toEqual({ X: null, Y: null, Z: null });
    expect(h.missing).toEqual([
      { to: "X", reason: "missing value", from: ["B"] },
      { to: "Y", reason: "missing value", from: ["B"] },
      { to: "Z", reason: "uncovered", from: [] },
    ]);
    const d = harmonise(links, new Map([["A", 1], ["B", 2]]), { kind: "intensive", weighting: { by: "denominator", values: new Map([["A", 5]]) } });
    expect(d.missing).toEqual([
      { to: "X", reason: "missing denominator", from: ["B"] },
      { to: "Y", reason: "missing denominator", from: ["B"] },
    ]);
    const zero = harmonise(links, new Map([["A", 1], ["B", 2]]), { kind: "intensive", weighting: { by: "denominator", values: new Map([["A", 0], ["B", 0]]) } });
    expect(zero.missing.map((m) => m.reason)).toEqual(["zero weight", "zero weight"]);
  });

  test("sources with values that no link uses are listed; intensive by area needs areas", () => {
    expect(harmonise(links, new Map([["A", 1], ["B", 1], ["C", 3]]), { kind: "extensive" }).unusedSources).toEqual(["C"]);
    expect(() => harmonise([{ from: "A", to: "X", share: 1 }], new Map([["A", 1]]), { kind: "intensive", weighting: { by: "area" } })).toThrow(/need the overlap area of A → X/);
  });
});
