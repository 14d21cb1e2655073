/**
 * Local Gi* as runs store it (issue 15, item 3): the classes under each
 * correction, and the stored z and p against R's spdep on the North Carolina
 * SIDS data (tests/fixtures/spdep, written by scripts/reference/spdep-reference.R).
 */
import { weightsFromNeighbourLists } from "@/lib/spatial";
import { computePeriod, type PeriodParams } from "@/lib/runs/compute";
import { classifyGiStar, type GiStarTest } from "@/lib/runs/significance";
import { Comparison, indexLists, loadData, loadLocal, loadNeighbours } from "../../fixtures/spdep/fixtures";

// Six tests, alternately high and low neighbourhoods, and one region without neighbours (not a test).
const P = [0.001, 0.004, 0.012, 0.03, 0.2, 0.6];
const TESTS: GiStarTest[] = [
  ...P.map((pseudoP, i) => ({ neighbours: 4, z: i % 2 === 0 ? 2.5 : -2.5, pseudoP })),
  { neighbours: 0, z: null, pseudoP: null },
];

describe("Gi* classes under the run's correction", () => {
  // source: R 4.2.2 stats::p.adjust(c(0.001, 0.004, 0.012, 0.03, 0.2, 0.6), method), printed with 17 digits:
  // "bonferroni" → 0.006 0.024 0.072 0.18 1 1; "BH" → 0.006 0.012 0.024 0.045 0.24 0.6.
  it.each([
    ["none", P, ["hot", "cold", "hot", "cold", "not-significant", "not-significant"]],
    ["bonferroni", [0.006, 0.024, 0.072, 0.18, 1, 1], ["hot", "cold", "not-significant", "not-significant", "not-significant", "not-significant"]],
    ["fdr", [0.006, 0.012, 0.024, 0.045, 0.24, 0.6], ["hot", "cold", "hot", "cold", "not-significant", "not-significant"]],
  ] as const)("%s: adjusted p as R's p.adjust over the regions with neighbours only, hot when z > 0 and cold when z < 0", (correction, adjusted, classes) => {
    const result = classifyGiStar(TESTS, 0.05, correction);
    adjusted.forEach((p, i) => expect(result.adjustedP[i]).toBeCloseTo(p, 15));
    expect(result.adjustedP[6]).toBeNull();
    expect(result.classes).toEqual([...classes, "no-neighbours"]);
  });

  it("the class turns at alpha itself (p ≤ alpha is significant) and a stricter alpha takes regions away", () => {
    expect(classifyGiStar(TESTS, 0.045, "fdr").classes.slice(0, 4)).toEqual(["hot", "cold", "hot", "cold"]);
    expect(classifyGiStar(TESTS, 0.044, "fdr").classes.slice(0, 4)).toEqual(["hot", "cold", "hot", "not-significant"]);
    expect(classifyGiStar(TESTS, 0.01, "none").classes.slice(0, 3)).toEqual(["hot", "cold", "not-significant"]);
  });

  it("a region with neighbours but an undefined z is tested yet never hot or cold", () => {
    const result = classifyGiStar([{ neighbours: 3, z: null, pseudoP: 0.001 }, ...TESTS.slice(0, 2)], 0.05, "bonferroni");
    expect(result.classes).toEqual(["not-significant", "hot", "cold"]);
    // m = 3: the undefined-z region still counts among the tests.
    expect(result.adjustedP[2]).toBeCloseTo(0.012, 15);
  });
});

describe("Gi* stored by a run period, against spdep on the NC SIDS data", () => {
  const data = loadData();
  const nb = loadNeighbours();
  const local = loadLocal();
  const ids = nb.ids.map(String);
  const baseWeights = weightsFromNeighbourLists(ids, indexLists(nb.ids, nb.queen.neighbours), { rule: "queen", transform: "binary" });
  const values = new Map(ids.map((id, i) => [id, data.variables.sid79.x[i]]));
  const params: PeriodParams = {
    weights: "queen",
    transform: "row-standardised",
    islandPolicy: "exclude",
    permutations: 999,
    seed: 17,
    alpha: 0.05,
    correction: "fdr",
    local: true,
  };
  const row = computePeriod({ baseWeights }, params, "sid79", "1979", values);
  const gi = row.giStar;

  it("z and its two-sided normal p equal spdep's localG with include.self and style W", () => {
    expect(gi).not.toBeNull();
    if (!gi) return;
    // source: spdep localG(sid79, nb2listw(include.self(queen), "W"), return_internals = TRUE); fixture nc-local.json localG.queen_W_star
    const f = local.localG.queen_W_star.variables.sid79;
    const c = new Comparison();
    expect(gi.ids).toEqual(ids);
    gi.ids.forEach((id, i) => {
      c.close(`${id} z`, gi.z[i], f.z[i]);
      c.close(`${id} p`, gi.p[i], f["Pr(z != E(G*i))"][i]);
    });
    c.assertAll(2 * ids.length);
  });

  it("classes follow the stored pseudo p after the run's correction, with local Moran's draws", () => {
    if (!gi || !row.local) throw new Error("local results missing");
    const again = classifyGiStar(
      gi.ids.map((_, i) => ({ neighbours: 1, z: gi.z[i], pseudoP: gi.pseudoP[i] })),
      params.alpha,
      params.correction,
    );
    expect(gi.classes).toEqual(again.classes);
    expect(gi.adjustedP).toEqual(again.adjustedP);
    expect(gi.correction).toBe("fdr");
    expect(gi.alpha).toBe(0.05);
    // Same relabellings as local Moran: the same pseudo p wherever I_i is not 0.
    row.local.Ii.forEach((Ii, i) => {
      if (Ii !== 0) expect(gi.pseudoP[i]).toBe(row.local?.pseudoP[i]);
    });
    expect(gi.counts.hot + gi.counts.cold + gi.counts["not-significant"] + gi.counts["no-neighbours"]).toBe(ids.length);
    expect(gi.counts.hot).toBe(gi.classes.filter((c) => c === "hot").length);
  });

  it("is not computed when the run does not ask for local results", () => {
    expect(computePeriod({ baseWeights }, { ...params, local: false }, "sid79", "1979", values).giStar).toBeNull();
  });
});
