import fc from "fast-check";
import {
  applyIslandPolicy,
  binaryWeights,
  connectedComponents,
  contiguityWeights,
  createSpatialWeights,
  distanceBandWeights,
  inverseDistanceWeights,
  isSymmetric,
  latticeWeights,
  linkWeight,
  nearestNeighbourWeights,
  parseWeightsSpecification,
  regionCentroids,
  restrictWeights,
  rowStandardisedWeights,
  smallestConnectingBand,
  summariseWeights,
  weightsFromEdgeList,
  weightsFromNeighbourLists,
  weightsFromTopology,
  weightsSums,
  withSelfLinks,
  detectCoordinateSystem,
  greatCircleDistance,
  type RegionPoints,
} from "@/lib/spatial";
import { gridTopology } from "./helpers";

function rowOf(weights: ReturnType<typeof latticeWeights>, id: string): string[] {
  const i = weights.ids.indexOf(id);
  const out: string[] = [];
  for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) out.push(weights.ids[weights.neighbours[p]]);
  return out;
}

describe("contiguity weights from TopoJSON", () => {
  const grid = gridTopology(3, 3);

  test("rook: the centre of a 3×3 grid has its 4 edge neighbours, a corner has 2 (by construction)", () => {
    const rook = contiguityWeights(grid, { object: "cells", idProperty: "code", rule: "rook" });
    expect(rowOf(rook, "r1c1").sort()).toEqual(["r0c1", "r1c0", "r1c2", "r2c1"]);
    expect(rowOf(rook, "r0c0").sort()).toEqual(["r0c1", "r1c0"]);
    expect(rook.transform).toBe("binary");
    expect(isSymmetric(rook)).toBe(true);
  });

  test("queen: the centre has all 8 surrounding cells, a corner has 3 (by construction)", () => {
    const queen = contiguityWeights(grid, { object: "cells", idProperty: "code", rule: "queen" });
    expect(rowOf(queen, "r1c1")).toHaveLength(8);
    expect(rowOf(queen, "r0c0").sort()).toEqual(["r0c1", "r1c0", "r1c1"]);
  });

  test("agrees with the lattice constructor on a 4×5 grid (rook and queen)", () => {
    const topo = gridTopology(4, 5);
    for (const rule of ["rook", "queen"] as const) {
      const fromTopology = contiguityWeights(topo, { object: "cells", idProperty: "code", rule });
      const lattice = latticeWeights(4, 5, rule);
      for (const id of lattice.ids) expect(rowOf(fromTopology, id).sort()).toEqual(rowOf(lattice, id).sort());
    }
  });

  test("unknown object, missing id property and duplicate ids throw with the name", () => {
    expect(() => contiguityWeights(grid, { object: "nope", idProperty: "code", rule: "rook" })).toThrow(/no object "nope"/);
    expect(() => contiguityWeights(grid, { object: "cells", idProperty: "name", rule: "rook" })).toThrow(/no "name" property/);
    const copy = JSON.parse(JSON.stringify(grid));
    copy.objects.cells.geometries[1].properties.code = "r0c0";
    expect(() => contiguityWeights(copy, { object: "cells", idProperty: "code", rule: "rook" })).toThrow(/"r0c0" appears twice/);
  });

  test("centroids of unit squares are their centres; planar coordinates are stated or detected", () => {
    const points = regionCentroids(gridTopology(2, 2, 100), { object: "cells", idProperty: "code" });
    expect(points.coordinates).toBe("planar"); // the bounding box reaches 200 > 180
    const i = points.ids.indexOf("r1c0");
    expect(points.x[i]).toBeCloseTo(50, 6);
    expect(points.y[i]).toBeCloseTo(150, 6);
    expect(detectCoordinateSystem([5, 6], [52, 51])).toBe("geographic");
  });

  test("weightsFromTopology accepts the CLI rules", () => {
    const topo = gridTopology(3, 3, 10);
    const knn = weightsFromTopology(topo, "knn:2", { object: "cells", idProperty: "code", coordinates: "planar" });
    expect(knn.rule).toBe("knn:2");
    expect(summariseWeights(knn).neighbourCounts.max).toBe(2);
    const band = weightsFromTopology(topo, "band:10", { object: "cells", idProperty: "code", coordinates: "planar" });
    // a band of exactly one cell width links rook neighbours only
    const rook = latticeWeights(3, 3, "rook");
    expect(Array.from(band.neighbours)).toEqual(Array.from(rook.neighbours));
    expect(parseWeightsSpecification("idw:25:2")).toEqual({ kind: "idw", threshold: 25, power: 2 });
    expect(parseWeightsSpecification("band")).toEqual({ kind: "band", threshold: null });
    expect(() => parseWeightsSpecification("hexagon")).toThrow(/Unknown weights rule/);
    expect(() => parseWeightsSpecification("knn:0")).toThrow(/Unknown weights rule/);
  });
});

describe("weights sums and summaries", () => {
  test("2×2 binary rook lattice: S0 = 8, S1 = 16, S2 = 64 (hand-computed from the definitions)", () => {
    // each of 4 cells has 2 neighbours: S0 = 8; S1 = ½·8·(1+1)² = 16; S2 = 4·(2+2)² = 64
    expect(weightsSums(latticeWeights(2, 2, "rook"))).toEqual({ S0: 8, S1: 16, S2: 64 });
  });

  test("row-standardised weights without islands have S0 = n", () => {
    const w = rowStandardisedWeights(latticeWeights(5, 7, "queen"));
    expect(weightsSums(w).S0).toBeCloseTo(35, 12);
  });

  test("S1 and S2 of an asymmetric matrix match a dense computation", () => {
    const w = weightsFromNeighbourLists(["a", "b", "c", "d"], [[1, 2], [2], [0, 3], [1]], {
      rule: "t",
      weightLists: [[0.5, 2], [1], [3, 0.25], [4]],
    });
    const dense = [0, 1, 2, 3].map((i) => [0, 1, 2, 3].map((j) => linkWeight(w, i, j)));
    let S1 = 0;
    let S2 = 0;
    for (let i = 0; i < 4; i++) {
      let row = 0;
      let column = 0;
      for (let j = 0; j < 4; j++) {
        S1 += 0.5 * (dense[i][j] + dense[j][i]) ** 2;
        row += dense[i][j];
        column += dense[j][i];
      }
      S2 += (row + column) ** 2;
    }
    const sums = weightsSums(w);
    expect(sums.S1).toBeCloseTo(S1, 12);
    expect(sums.S2).toBeCloseTo(S2, 12);
  });

  test("summary reports islands, neighbour counts and components", () => {
    const w = weightsFromNeighbourLists(["a", "b", "c", "d", "e"], [[1], [0], [3], [2], []], { rule: "t" });
    const summary = summariseWeights(w);
    expect(summary.islands).toEqual(["e"]);
    expect(summary.components.count).toBe(3);
    expect(summary.components.sizes).toEqual([2, 2, 1]);
    expect(summary.neighbourCounts.histogram).toEqual([
      { neighbours: 0, regions: 1 },
      { neighbours: 1, regions: 4 },
    ]);
    expect(connectedComponents(latticeWeights(3, 3, "rook")).count).toBe(1);
  });
});

describe("transforms", () => {
  test("row-standardised rows sum to 1 (property over random graphs); islands stay empty; input untouched", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 12 }).chain((n) =>
          fc.tuple(
            fc.constant(n),
            fc.array(fc.tuple(fc.integer({ min: 0, max: n - 1 }), fc.integer({ min: 0, max: n - 1 }), fc.double({ min: 0.01, max: 50, noNaN: true }))),
          ),
        ),
        ([n, edges]) => {
          const ids = Array.from({ length: n }, (_, i) => `r${i}`);
          const seen = new Set<string>();
          const list = edges.filter(([a, b]) => a !== b && !seen.has(`${a},${b}`) && seen.add(`${a},${b}`));
          const w = weightsFromEdgeList(ids, list.map(([a, b, v]) => ({ from: ids[a], to: ids[b], weight: v })));
          const before = Array.from(w.weights);
          const standardised = rowStandardisedWeights(w);
          expect(Array.from(w.weights)).toEqual(before);
          for (let i = 0; i < n; i++) {
            let sum = 0;
            for (let p = standardised.offsets[i]; p < standardised.offsets[i + 1]; p++) sum += standardised.weights[p];
            if (standardised.offsets[i + 1] > standardised.offsets[i]) expect(sum).toBeCloseTo(1, 12);
            else expect(sum).toBe(0);
          }
        },
      ),
      { numRuns: 100 },
    );
  });

  test("binary sets every weight to 1; self-links add the diagonal", () => {
    const w = inverseDistanceWeights(linePoints([0, 1, 3]), { threshold: 5, power: 1 });
    expect(Array.from(binaryWeights(w).weights)).toEqual([1, 1, 1, 1, 1, 1]);
    const self = withSelfLinks(latticeWeights(1, 3, "rook"));
    expect(linkWeight(self, 1, 1)).toBe(1);
    expect(self.neighbours.length).toBe(4 + 3);
  });
});

function linePoints(xs: number[]): RegionPoints {
  return { ids: xs.map((_, i) => `p${i}`), x: Float64Array.from(xs), y: new Float64Array(xs.length), coordinates: "planar" };
}

describe("distance weights", () => {
  test("k nearest neighbours on a line, ties broken by region order; symmetrised union", () => {
    const points = linePoints([0, 1, 2, 10]);
    const knn = nearestNeighbourWeights(points, { k: 1 });
    // p1 is at distance 1 from p0 and p2: the earlier region (p0) wins
    expect([0, 1, 2, 3].map((i) => knn.ids[knn.neighbours[knn.offsets[i]]])).toEqual(["p1", "p0", "p1", "p2"]);
    const symmetric = nearestNeighbourWeights(points, { k: 1, symmetrise: true });
    expect(isSymmetric(symmetric)).toBe(true);
    expect(symmetric.rule).toBe("knn:1:symmetric");
    expect(() => nearestNeighbourWeights(points, { k: 4 })).toThrow(/k from 1 to n − 1/);
  });

  test("the default band is the largest nearest-neighbour distance and leaves no island", () => {
    const points = linePoints([0, 1, 2, 10]);
    expect(smallestConnectingBand(points)).toBe(8);
    const band = distanceBandWeights(points);
    expect(summariseWeights(band).islands).toEqual([]);
    expect(band.rule).toBe("band:8");
  });

  test("inverse distance: w = d^-power within the band; coincident points throw", () => {
    const w = inverseDistanceWeights(linePoints([0, 2, 3]), { threshold: 2.5, power: 2 });
    expect(linkWeight(w, 0, 1)).toBeCloseTo(0.25, 15);
    expect(linkWeight(w, 0, 2)).toBe(0);
    expect(linkWeight(w, 1, 2)).toBeCloseTo(1, 15);
    expect(() => inverseDistanceWeights(linePoints([0, 0, 1]), { threshold: 2 })).toThrow(/same point/);
  });

  test("great-circle distance: one degree of longitude at the equator ≈ 111.195 km (2πR/360 with R = 6371.0088)", () => {
    expect(greatCircleDistance(0, 0, 1, 0)).toBeCloseTo((2 * Math.PI * 6371.0088) / 360, 6);
  });
});

describe("edge lists, validation, restriction and islands", () => {
  test("edge list: unknown ids are named; duplicates and self-links throw; undirected mirrors", () => {
    const ids = ["a", "b", "c"];
    expect(() => weightsFromEdgeList(ids, [{ from: "a", to: "x" }, { from: "y", to: "b" }])).toThrow(/"x", "y"/);
    expect(() => weightsFromEdgeList(ids, [{ from: "a", to: "b" }, { from: "a", to: "b" }])).toThrow(/listed twice/);
    expect(() => weightsFromEdgeList(ids, [{ from: "a", to: "a" }])).toThrow(/linked to itself/);
    expect(() => weightsFromEdgeList(ids, [{ from: "a", to: "b", weight: -1 }])).toThrow(/finite and > 0/);
    const w = weightsFromEdgeList(ids, [{ from: "a", to: "b", weight: 2 }], { undirected: true });
    expect(linkWeight(w, 1, 0)).toBe(2);
    expect(w.transform).toBe("none");
  });

  test("createSpatialWeights rejects malformed CSR", () => {
    const base = { ids: ["a", "b"], rule: "t", transform: "binary" as const };
    expect(() => createSpatialWeights({ ...base, offsets: [0, 1], neighbours: [1], weights: [1] })).toThrow(/n \+ 1/);
    expect(() => createSpatialWeights({ ...base, offsets: [0, 1, 1], neighbours: [5], weights: [1] })).toThrow(/out of range/);
    expect(() => createSpatialWeights({ ...base, offsets: [0, 2, 2], neighbours: [1, 1], weights: [1, 1] })).toThrow(/appears twice/);
    expect(() => createSpatialWeights({ ...base, ids: ["a", "a"], offsets: [0, 0, 0], neighbours: [], weights: [] })).toThrow(/more than once/);
  });

  test("restriction drops rows and columns and re-standardises row-standardised weights", () => {
    const w = rowStandardisedWeights(latticeWeights(1, 4, "rook")); // path r0c0 - r0c1 - r0c2 - r0c3
    const restricted = restrictWeights(w, [true, true, false, true]);
    expect(restricted.ids).toEqual(["r0c0", "r0c1", "r0c3"]);
    expect(linkWeight(restricted, 1, 0)).toBe(1); // r0c1 keeps one neighbour, re-standardised to 1
    expect(restricted.offsets[3] - restricted.offsets[2]).toBe(0); // r0c3 became an island
  });

  test("island policies: exclude reduces n, keep leaves an empty row, attach links the nearest region both ways", () => {
    const w = weightsFromNeighbourLists(["a", "b", "c"], [[1], [0], []], { rule: "t" });
    const points = linePoints([0, 1, 5]);
    const renamed: RegionPoints = { ...points, ids: ["a", "b", "c"] };
    expect(applyIslandPolicy(w, "exclude").weights.ids).toEqual(["a", "b"]);
    expect(applyIslandPolicy(w, "keep").islands).toEqual(["c"]);
    const attached = applyIslandPolicy(w, "attach", renamed);
    expect(attached.attached).toEqual([{ id: "c", neighbour: "b" }]);
    expect(linkWeight(attached.weights, 2, 1)).toBe(1);
    expect(linkWeight(attached.weights, 1, 2)).toBe(1);
    expect(() => applyIslandPolicy(w, "attach")).toThrow(/needs region points/);
  });
});
