import type { Topology } from "topojson-specification";
import { robustnessStrip } from "@/lib/runs/compare";
import { distanceMeasureOf, distanceSentence, ruleMeasuresDistance } from "@/lib/runs/distances";

// The robustness strip says how its k-nearest and band rules measured
// distance (issue 13, item 5): great-circle on the sphere for
// longitude/latitude boundaries, planar in the file's units for projected ones.

/** A 3 × 3 grid of unit squares at (x0, y0) with side `size`, as a topology without a transform. */
function grid(x0: number, y0: number, size: number): Topology {
  const arcs: [number, number][][] = [];
  const geometries = [];
  for (let row = 0; row < 3; row++) {
    for (let col = 0; col < 3; col++) {
      const x = x0 + col * size;
      const y = y0 + row * size;
      arcs.push([
        [x, y],
        [x + size, y],
        [x + size, y + size],
        [x, y + size],
        [x, y],
      ]);
      geometries.push({ type: "Polygon" as const, arcs: [[arcs.length - 1]], properties: { code: `R${row}${col}` } });
    }
  }
  return { type: "Topology", objects: { regions: { type: "GeometryCollection", geometries } }, arcs } as unknown as Topology;
}

const layout = { object: "regions", idProperty: "code" };
const params = { islandPolicy: "exclude" as const, transform: "row-standardised" as const, permutations: 99, seed: 1 };
const values = new Map(Array.from({ length: 9 }, (_, i) => [`R${Math.floor(i / 3)}${i % 3}`, i % 3 === 0 ? i : i * 2]));

describe("the robustness strip's distance measure", () => {
  it("marks the nearest-neighbour and band rules great-circle for longitude/latitude boundaries, contiguity none", () => {
    const entries = robustnessStrip(grid(5, 51, 0.1), layout, params, values);
    expect(Object.fromEntries(entries.map((e) => [e.rule, e.distances]))).toEqual({
      queen: null,
      rook: null,
      "knn:4": "great-circle",
      "knn:6": "great-circle",
      "knn:8": "great-circle",
      band: "great-circle",
    });
  });

  it("marks them planar for projected boundaries", () => {
    const entries = robustnessStrip(grid(400_000, 5_700_000, 10_000), layout, params, values);
    expect(entries.filter((e) => e.distances !== null).map((e) => e.distances)).toEqual(["planar", "planar", "planar", "planar"]);
  });

  it("says so in words", () => {
    expect(distanceSentence("great-circle")).toMatch(/great-circle distances between region centroids on a sphere .* longitude and latitude/);
    expect(distanceSentence("planar")).toMatch(/straight-line \(planar\) distances .* in the boundary file's own units, because these boundaries are projected/);
    expect(distanceMeasureOf("geographic")).toBe("great-circle");
    expect(distanceMeasureOf("planar")).toBe("planar");
  });

  it.each([
    ["queen", false],
    ["rook", false],
    ["knn:4", true],
    ["knn:6:symmetric", true],
    ["band", true],
    ["band:12.5", true],
    ["idw:10:2", true],
    ["bandit", false],
  ])("rule %p measures distance: %p", (rule, expected) => {
    expect(ruleMeasuresDistance(rule)).toBe(expected);
  });
});
