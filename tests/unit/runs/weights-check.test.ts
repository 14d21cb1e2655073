import type { SpatialWeights } from "@/lib/spatial";
import { MINIMUM_REGIONS } from "@/lib/runs/compute";
import { weightsProblem, type WeightsCheckInput } from "@/lib/runs/weights-check";

/** Binary weights over `n` regions with the given undirected links. */
function weights(n: number, links: [number, number][]): SpatialWeights {
  const rows: number[][] = Array.from({ length: n }, () => []);
  for (const [a, b] of links) {
    rows[a].push(b);
    rows[b].push(a);
  }
  const offsets = new Int32Array(n + 1);
  rows.forEach((r, i) => (offsets[i + 1] = offsets[i] + r.length));
  const neighbours = Int32Array.from(rows.flatMap((r) => [...r].sort((x, y) => x - y)));
  return { ids: rows.map((_, i) => `R${i}`), offsets, neighbours, weights: new Float64Array(neighbours.length).fill(1), rule: "test", transform: "binary" };
}

const base = (over: Partial<WeightsCheckInput>): WeightsCheckInput => ({
  rule: "queen",
  islandPolicy: "exclude",
  regionCount: 6,
  boundary: 'boundaries "Test" v1',
  build: () => weights(6, [[0, 1], [1, 2], [2, 3], [3, 4], [4, 5]]),
  ...over,
});

describe("weightsProblem", () => {
  it("accepts weights that link enough regions", () => {
    expect(weightsProblem(base({}))).toBeNull();
  });

  it("names the rule, the region count and the largest k when the weights cannot be built", () => {
    const message = weightsProblem(
      base({
        rule: "knn:6",
        build: () => {
          throw new Error("k nearest neighbours needs an integer k from 1 to n − 1 = 5; got 6.");
        },
      }),
    );
    expect(message).toContain('"knn:6"');
    expect(message).toContain("6 regions");
    expect(message).toContain('boundaries "Test" v1');
    expect(message).toContain("Choose k from 1 to 5.");
  });

  it("refuses a rule that links no region under every island policy, pointing at band:auto for a band", () => {
    for (const islandPolicy of ["exclude", "keep", "attach"] as const) {
      const message = weightsProblem(base({ rule: "band:0.5", islandPolicy, build: () => weights(6, []) }));
      expect(message).toContain('"band:0.5" links none of the 6 regions');
      expect(message).toContain("band:auto");
    }
  });

  it(`refuses, when islands are excluded, a rule that links fewer than ${MINIMUM_REGIONS} regions; keeping islands allows it`, () => {
    const few = () => weights(6, [[0, 1]]);
    expect(weightsProblem(base({ rule: "band:2", build: few }))).toContain("only 2 of the 6 regions");
    expect(weightsProblem(base({ rule: "band:2", islandPolicy: "keep", build: few }))).toBeNull();
    expect(weightsProblem(base({ rule: "band:2", build: () => weights(6, [[0, 1], [2, 3]]) }))).toBeNull();
  });

  it("says region, not regions, for one", () => {
    expect(weightsProblem(base({ rule: "queen", regionCount: 1, build: () => weights(1, []) }))).toContain("none of the 1 region of");
  });
});
