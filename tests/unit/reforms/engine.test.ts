import { topology } from "topojson-server";
import type { FeatureCollection, Polygon } from "geojson";
import type { Topology } from "topojson-specification";
import { deriveCrosswalk, harmoniseValues, parseCrosswalkCsv, regionAreas } from "@/lib/reforms/engine";
import { carriedPeriods, defaultMethods, reformSummary, resolveMethods } from "@/lib/reforms/methods";

function squares(cells: Record<string, [number, number, number, number]>): { topology: Topology; object: string; idProperty: string } {
  const fc: FeatureCollection<Polygon> = {
    type: "FeatureCollection",
    features: Object.entries(cells).map(([code, [x0, y0, x1, y1]]) => ({
      type: "Feature",
      properties: { code },
      geometry: { type: "Polygon", coordinates: [[[x0 + 1000, y0 + 1000], [x1 + 1000, y0 + 1000], [x1 + 1000, y1 + 1000], [x0 + 1000, y1 + 1000], [x0 + 1000, y0 + 1000]]] },
    })),
  };
  return { topology: topology({ regions: fc }) as unknown as Topology, object: "regions", idProperty: "code" };
}

describe("deriveCrosswalk (areal weighting)", () => {
  // Rectangle areas by hand (width × height): A 2×2, B 2×2 merge into M 4×2; C 2×2 splits into C1 2×1.5 and C2 2×0.5.
  const before = squares({ A: [0, 0, 2, 2], B: [2, 0, 4, 2], C: [4, 0, 6, 2] });
  const after = squares({ M: [0, 0, 4, 2], C1: [4, 0, 6, 1.5], C2: [4, 1.5, 6, 2] });

  it("gives each source its area shares in the targets", () => {
    const derived = deriveCrosswalk(before, after);
    const share = (from: string, to: string) => derived.pairs.find((p) => p.from === from && p.to === to)?.share;
    expect(share("A", "M")).toBeCloseTo(1, 12);
    expect(share("B", "M")).toBeCloseTo(1, 12);
    expect(share("C", "C1")).toBeCloseTo(0.75, 12);
    expect(share("C", "C2")).toBeCloseTo(0.25, 12);
    expect(derived.pairs).toHaveLength(4);
    expect(derived.coordinates).toBe("planar");
    expect(derived.fromAreas.C).toBeCloseTo(4, 12);
    expect(derived.unmatchedFrom).toEqual([]);
    expect(derived.uncoveredTo).toEqual([]);
    expect(reformSummary(derived.pairs)).toEqual({ merged: [{ to: "M", from: ["A", "B"] }], split: [{ from: "C", to: ["C1", "C2"] }], unchanged: 0 });
  });

  it("handles a non-convex source (an L shape) exactly and drops slivers", () => {
    // L = 3×3 square minus its top-right 2×2: area 5 (planar: far from the origin, so not read as longitude/latitude). Target T covers x 0..1 (area 3 of L) and U the rest (2 of L).
    const l: FeatureCollection<Polygon> = {
      type: "FeatureCollection",
      features: [{ type: "Feature", properties: { code: "L" }, geometry: { type: "Polygon", coordinates: [[[1000, 1000], [1003, 1000], [1003, 1001], [1001, 1001], [1001, 1003], [1000, 1003], [1000, 1000]]] } }],
    };
    const source = { topology: topology({ r: l }) as unknown as Topology, object: "r", idProperty: "code" };
    const target = squares({ T: [0, 0, 1, 3], U: [1, 0, 3, 3], S: [2.999, 0.5, 3.5, 0.5005] });
    const derived = deriveCrosswalk(source, target);
    // The engine gives a dropped sliver's area back to the source's other pairs (its coverage stays what the overlay says), so the shares move by about 1e-7.
    expect(derived.pairs.map((p) => [p.from, p.to, Number(p.share.toFixed(6))])).toEqual([
      ["L", "T", 0.6],
      ["L", "U", 0.4],
    ]);
    expect(regionAreas(source).L).toBeCloseTo(5, 12);
    // S overlaps L by 0.001 × 0.0005, a share of 1e-7: dropped as a sliver, so S is uncovered.
    expect(derived.droppedSlivers.map((p) => p.to)).toEqual(["S"]);
    expect(derived.uncoveredTo).toEqual(["S"]);
  });
});

describe("harmoniseValues", () => {
  const pairs = [
    { from: "A", to: "M", share: 1 },
    { from: "B", to: "M", share: 1 },
    { from: "C", to: "C1", share: 0.75 },
    { from: "C", to: "C2", share: 0.25 },
  ];
  it("sums counts by share, and a gap leaves the total missing", () => {
    const out = harmoniseValues(pairs, new Map([["A", 10], ["B", 5], ["C", 8]]), { kind: "extensive" });
    expect(Object.fromEntries(out)).toEqual({ M: 15, C1: 6, C2: 2 });
    expect(harmoniseValues(pairs, new Map([["A", 10], ["B", null], ["C", 8]]), { kind: "extensive" }).get("M")).toBeNull();
  });
  it("averages by overlap area over the covered part, or by a denominator", () => {
    const areas = [4, 2, 3, 1];
    const out = harmoniseValues(pairs, new Map([["A", 10], ["B", 4], ["C", 7]]), { kind: "intensive", overlapAreas: areas });
    expect(out.get("M")).toBeCloseTo((4 * 10 + 2 * 4) / 6, 12);
    expect(out.get("C1")).toBe(7);
    // A new region with a missing contributor is missing, not a mean over part of it.
    expect(harmoniseValues(pairs, new Map([["A", 10], ["B", null]]), { kind: "intensive", overlapAreas: areas }).get("M")).toBeNull();
    const byPopulation = harmoniseValues(pairs, new Map([["A", 10], ["B", 4]]), { kind: "intensive-by", denominatorByFrom: new Map([["A", 100], ["B", 300]]) });
    expect(byPopulation.get("M")).toBeCloseTo((100 * 10 + 300 * 4) / 400, 12);
  });
});

describe("parseCrosswalkCsv", () => {
  it("names the line and code of every problem", () => {
    const csv = "from,to,share\nA,M,1\nB,M,1.2\nC,C1,0.5\nC,C9,0.5\nA,M,1\nD,C2,0.5\n";
    const parsed = parseCrosswalkCsv(csv, ["A", "B", "C", "E"], ["M", "C1", "C2"]);
    const { pairs, issues } = parsed;
    const brief = issues.map((i) => [i.severity, i.code, i.line]);
    expect(brief).toEqual([
      ["error", "bad-share", 3],
      ["error", "unknown-to", 5],
      ["error", "duplicate-pair", 6],
      ["error", "unknown-from", 7],
      ["error", "shares-sum", 4],
      ["warning", "unmatched-from", null],
      ["warning", "uncovered-to", null],
    ]);
    // One warning per kind lists the codes; the lists come whole beside it.
    expect(parsed.unmatchedFrom).toEqual(["B", "E"]);
    expect(parsed.uncoveredTo).toEqual(["C2"]);
    expect(pairs).toEqual([{ from: "A", to: "M", share: 1 }, { from: "C", to: "C1", share: 0.5 }]);
  });
  it("reads semicolons, quotes and any column order; refuses a header without share", () => {
    const { pairs, issues } = parseCrosswalkCsv('share;"to";from\n1;M;A\n', ["A"], ["M"]);
    expect(issues).toEqual([]);
    expect(pairs).toEqual([{ from: "A", to: "M", share: 1 }]);
    expect(parseCrosswalkCsv("from,to\nA,M\n", ["A"], ["M"]).issues.map((i) => i.code)).toEqual(["header"]);
  });
});

describe("methods", () => {
  const rates = [{ indicator: "closure_rate", events: "closures", population: "residents", multiplier: 1000 as const }];
  const defaults = defaultMethods(["closure_rate", "closures", "residents", "income"], rates);
  it("re-derives declared rates, sums their counts and averages the rest", () => {
    expect(defaults).toEqual({
      closure_rate: { kind: "rate", events: "closures", population: "residents" },
      closures: { kind: "extensive" },
      residents: { kind: "extensive" },
      income: { kind: "intensive" },
    });
  });
  it("applies the steward's choices and refuses what cannot be", () => {
    expect(resolveMethods(defaults, { income: { kind: "intensive-by", denominator: "residents" } })).toEqual({ ok: true, methods: { ...defaults, income: { kind: "intensive-by", denominator: "residents" } } });
    expect(resolveMethods(defaults, { closure_rate: { kind: "intensive" } })).toMatchObject({ ok: false, indicator: "closure_rate" });
    expect(resolveMethods(defaults, { income: { kind: "intensive-by", denominator: "closure_rate" } })).toMatchObject({ ok: false });
    expect(resolveMethods(defaults, { nothing: { kind: "extensive" } })).toMatchObject({ ok: false, indicator: "nothing" });
  });
  it("says which periods were carried", () => {
    expect(carriedPeriods(["2017", "2018", "2019", "2020"], ["2020", "2019"])).toEqual({ carried: ["2017", "2018"], firstOnTarget: "2019" });
    expect(carriedPeriods(["2017"], [])).toEqual({ carried: ["2017"], firstOnTarget: null });
  });
});
