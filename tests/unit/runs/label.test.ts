import { runLabel, runName, weightsLabel } from "@/lib/runs/label";

// Runs are told apart by their label wherever they are listed or picked
// (issue 13, item 7): per-workspace number, panel and version, weights rule
// and transform, permutations.

const base = { number: 7, panelName: "Regional panel", panelVersion: 3, params: { weights: "queen", transform: "row-standardised", permutations: 999 } };

describe("runLabel", () => {
  it("names the number, panel version, weights, transform and permutations", () => {
    expect(runLabel(base)).toBe("Run 7 · Regional panel v3 · queen, row-standardised · 999 perm.");
  });

  it("tells a queen run from a rook run of the same panel version", () => {
    const rook = runLabel({ ...base, number: 8, params: { ...base.params, weights: "rook" } });
    expect(rook).toBe("Run 8 · Regional panel v3 · rook, row-standardised · 999 perm.");
    expect(runLabel({ ...base, params: { ...base.params, weights: "rook" } })).not.toBe(runLabel(base));
  });

  it("tells runs apart by transform, permutations and panel version", () => {
    const labels = new Set([
      runLabel(base),
      runLabel({ ...base, params: { ...base.params, transform: "binary" } }),
      runLabel({ ...base, params: { ...base.params, permutations: 9999 } }),
      runLabel({ ...base, panelVersion: 4 }),
    ]);
    expect(labels.size).toBe(4);
  });

  it("writes large permutation counts with thousands separators", () => {
    expect(runLabel({ ...base, params: { ...base.params, permutations: 99999 } })).toBe("Run 7 · Regional panel v3 · queen, row-standardised · 99,999 perm.");
  });

  it("shows the per-workspace number it is given, never anything else", () => {
    expect(runLabel({ ...base, number: 1 })).toMatch(/^Run 1 · /);
    expect(runName(12)).toBe("Run 12");
  });
});

describe("weightsLabel", () => {
  it.each([
    ["queen", "row-standardised", "queen, row-standardised"],
    ["rook", "binary", "rook, binary"],
    ["knn:6", "row-standardised", "6 nearest, row-standardised"],
    ["band", "binary", "distance band, binary"],
  ])("%s with %s weights reads %p", (rule, transform, expected) => {
    expect(weightsLabel(rule, transform)).toBe(expected);
  });
});
