import {
  canonicalWeights,
  comparable,
  comparabilityKey,
  describeMethod,
  describeMethodChange,
  methodDifferences,
  selectBaseline,
  type ComparableRun,
} from "@/lib/runs/comparability";

const base = {
  weights: "queen",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 999,
  seed: 1,
  alpha: 0.05,
  correction: "fdr",
  indicators: ["u"],
  periods: ["2012", "2013"],
  local: true,
  panelVersionId: 10,
  boundaryVersionId: 3,
  method: "tessera-runs/2",
};
const run = (id: number, params: Record<string, unknown> = {}, panelId = 1): ComparableRun => ({ id, panelId, params: { ...base, ...params } });

describe("comparability key", () => {
  it("ignores the seed, the chosen indicators and periods, and which version of the panel", () => {
    expect(comparable(run(1), run(2, { seed: 99, indicators: ["u", "b"], periods: ["2014"], panelVersionId: 11, boundaryVersionId: 4 }))).toBe(true);
    // Covariates add a regression beside each row and change none of the numbers compared.
    expect(comparable(run(1), run(2, { controlFor: ["heavy_industry_share"] }))).toBe(true);
  });

  it.each([
    ["weights", { weights: "rook" }],
    ["transform", { transform: "binary" }],
    ["island policy", { islandPolicy: "keep" }],
    ["permutations", { permutations: 199 }],
    ["alpha", { alpha: 0.01 }],
    ["correction", { correction: "bonferroni" }],
    ["local clusters", { local: false }],
    ["sequential p-values", { sequentialExtremes: 20 }],
    ["computation", { method: "tessera-runs/1" }],
    ["a parameter added later", { someFutureOption: "x" }],
  ])("%s: another value is another method", (_label, change) => {
    expect(comparable(run(1), run(2, change))).toBe(false);
  });

  it("another panel is another lineage, whatever the method", () => {
    expect(comparable(run(1), run(2, {}, 2))).toBe(false);
  });

  it("reads the weights rule by meaning, not spelling", () => {
    expect(canonicalWeights(" Queen ")).toBe("queen");
    expect(canonicalWeights("knn:04")).toBe("knn:4");
    expect(canonicalWeights("band")).toBe("band:auto");
    expect(comparable(run(1, { weights: "KNN:6" }), run(2, { weights: "knn:6" }))).toBe(true);
    expect(comparable(run(1, { weights: "knn:6" }), run(2, { weights: "knn:6:symmetric" }))).toBe(false);
  });

  it("an option absent from older runs reads as off, not as a difference", () => {
    expect(comparable(run(1), run(2, { someFutureOption: false }))).toBe(true);
    expect(comparabilityKey(run(1, { local: false })).fields.local).toBe(false);
  });
});

describe("method change sentences", () => {
  it("names what changed, from what to what, and compares nothing", () => {
    expect(describeMethodChange(methodDifferences(run(1), run(2, { weights: "rook" })))).toBe("weights changed from queen to rook; no comparison");
    expect(describeMethodChange(methodDifferences(run(1), run(2, { weights: "rook", permutations: 199, sequentialExtremes: 20 })))).toBe(
      "weights changed from queen to rook, permutations changed from 999 to 199 and sequential p-values changed from off to on (h = 20); no comparison",
    );
    expect(describeMethodChange(methodDifferences(run(1), run(2, { local: false })))).toBe("local clusters changed from on to off; no comparison");
  });

  it("describes a run's method in one line", () => {
    expect(describeMethod(run(1))).toBe(
      "weights queen, transform row-standardised, island policy exclude, 999 permutations, alpha 0.05, correction fdr, local clusters on, sequential p-values off, computation tessera-runs/2",
    );
  });
});

describe("selectBaseline", () => {
  const queen1 = run(1);
  const rook = run(2, { weights: "rook" });
  const queen2 = run(3, { seed: 5 });
  const otherPanel = run(4, {}, 9);

  it("queen then rook: the rook run has no comparable baseline, only a change of method", () => {
    const b = selectBaseline(rook, [queen1]);
    expect(b).toMatchObject({ kind: "method-changed", run: { id: 1 }, sentence: "weights changed from queen to rook; no comparison" });
  });

  it("queen, rook, queen: the second queen run compares with the first, skipping the rook run in between", () => {
    expect(selectBaseline(queen2, [rook, queen1])).toMatchObject({ kind: "comparable", run: { id: 1 } });
  });

  it("runs of other panels are never baselines, nor changes of method", () => {
    expect(selectBaseline(queen2, [otherPanel])).toEqual({ kind: "none" });
    expect(selectBaseline(queen2, [])).toEqual({ kind: "none" });
  });

  it("picks the newest comparable candidate (candidates come newest first)", () => {
    const queen0 = run(0);
    expect(selectBaseline(queen2, [queen1, queen0])).toMatchObject({ kind: "comparable", run: { id: 1 } });
  });

  it("the run itself counts (a digest that already reported it)", () => {
    expect(selectBaseline(queen2, [queen2, rook])).toMatchObject({ kind: "comparable", run: { id: 3 } });
  });

  it("with several other methods, reports the change against the newest of the panel", () => {
    const knn = run(5, { weights: "knn:6" });
    expect(selectBaseline(knn, [rook, queen1, otherPanel])).toMatchObject({ kind: "method-changed", run: { id: 2 }, sentence: "weights changed from rook to knn:6; no comparison" });
  });
});
