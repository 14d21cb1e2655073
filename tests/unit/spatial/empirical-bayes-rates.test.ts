/**
 * Global and local empirical-Bayes rates (Marshall 1991), Moran's I of
 * EB-standardised rates (Assunção & Reis 1999) and hot-spot classes, on
 * examples worked by hand from the published formulas (quoted beside each
 * check). The comparison with R's spdep is in rates-hotspots-reference.test.ts.
 */
import {
  createRandomSource,
  empiricalBayesMoran,
  empiricalBayesStandardise,
  globalEmpiricalBayesRates,
  globalMoran,
  hotSpotClasses,
  latticeWeights,
  localEmpiricalBayesRates,
  rowStandardisedWeights,
  weightsFromNeighbourLists,
  type LocalGetisOrdResult,
} from "@/lib/spatial";
import { inventedValues } from "./helpers";

// events 0, 10, 40 over populations of 100 each: r = 0, .1, .4
const events = [0, 10, 40];
const populations = [100, 100, 100];
const path = weightsFromNeighbourLists(["a", "b", "c"], [[1], [0, 2], [1]], { rule: "path" });

describe("global empirical-Bayes rates (Marshall 1991, method of moments)", () => {
  test("hand-worked: b = 1/6, s² = 13/450, a = 49/1800, shrinkage a/(a + b/P) = 49/52", () => {
    // s² = Σ P (r − b)² / Σ P = (1/36 + 1/225 + 49/900)/3 = 13/450; a = s² − b/P̄ = 13/450 − 1/600 = 49/1800
    const r = globalEmpiricalBayesRates(events, populations);
    expect(r.globalRate).toBeCloseTo(1 / 6, 15);
    expect(r.priorVariance).toBeCloseTo(49 / 1800, 15);
    [0, 0.1, 0.4].forEach((raw, i) => {
      expect(r.raw[i]).toBeCloseTo(raw, 15);
      expect(r.smoothed[i]).toBeCloseTo(1 / 6 + (49 / 52) * (raw - 1 / 6), 14);
    });
  });

  test("rates that vary no more than Poisson noise (a < 0, clamped to 0) all become b; no events gives 0", () => {
    // r = .1 .2 .3 over 10 each: s² = 1/150 < b/P̄ = 1/50, so a = 0 and every rate is b = .2
    const r = globalEmpiricalBayesRates([1, 2, 3], [10, 10, 10]);
    expect(r.priorVariance).toBe(0);
    r.smoothed.forEach((v) => expect(v).toBeCloseTo(0.2, 15));
    expect(Array.from(globalEmpiricalBayesRates([0, 0], [5, 7]).smoothed)).toEqual([0, 0]);
  });

  test("bad counts and populations throw, naming the position", () => {
    expect(() => globalEmpiricalBayesRates([1, -1], [10, 10])).toThrow(/event count 1 is -1/);
    expect(() => globalEmpiricalBayesRates([1, 1], [10, 0])).toThrow(/population 1 is 0/);
    expect(() => globalEmpiricalBayesRates([1, NaN], [10, 10])).toThrow(/event count 1 is NaN/);
    expect(() => globalEmpiricalBayesRates([1], [10])).toThrow(/at least 2 regions/);
    expect(() => globalEmpiricalBayesRates([1, 2], [10])).toThrow(/2 event counts but 1 populations/);
  });
});

describe("local empirical-Bayes rates over each region and its neighbours", () => {
  test("hand-worked on a path a–b–c: the end region shrinks towards the rate of itself and its one neighbour", () => {
    const r = localEmpiricalBayesRates(events, populations, path);
    expect(Array.from(r.neighbourhoodSizes)).toEqual([2, 3, 2]);
    // a: N = {a, b}: m = 10/200 = .05; Σ P (r − m)²/Σ P = (.25 + .25)/200 = .0025; a = .0025 − .05/100 = .002;
    //    smoothed = .05 + (0 − .05)·.002/(.002 + .05/100) = .01
    expect(r.localRates[0]).toBeCloseTo(0.05, 15);
    expect(r.priorVariances[0]).toBeCloseTo(0.002, 15);
    expect(r.smoothed[0]).toBeCloseTo(0.01, 15);
    // b: N = everything, so the local prior is the global one
    const global = globalEmpiricalBayesRates(events, populations);
    expect(r.localRates[1]).toBeCloseTo(global.globalRate, 15);
    expect(r.smoothed[1]).toBeCloseTo(global.smoothed[1], 14);
  });

  test("each-local-rate centres region j's deviation on m_j (hand-worked for region a)", () => {
    // a: 100(0 − m_a)² + 100(.1 − m_b)² with m_a = .05, m_b = 1/6: (.25 + 4/9)/200 − .0005
    const r = localEmpiricalBayesRates(events, populations, path, { deviationsFrom: "each-local-rate" });
    expect(r.priorVariances[0]).toBeCloseTo((0.25 + 4 / 9) / 200 - 0.0005, 15);
  });

  test("a region without neighbours keeps its raw rate; no events in a neighbourhood gives 0, not NaN", () => {
    const islands = weightsFromNeighbourLists(["a", "b", "c"], [[1], [0], []], { rule: "edges" });
    const r = localEmpiricalBayesRates([0, 0, 7], [50, 80, 100], islands);
    expect(r.smoothed[2]).toBeCloseTo(0.07, 15);
    expect(Array.from(r.smoothed.subarray(0, 2))).toEqual([0, 0]);
  });

  test("misaligned inputs and self-links throw", () => {
    expect(() => localEmpiricalBayesRates([1, 2], [10, 10], path)).toThrow(/2 event counts for 3 regions/);
    expect(() => localEmpiricalBayesRates([1, 2, 3], [10, -1, 10], path)).toThrow(/population 1 is -1/);
  });
});

describe("Moran's I of EB-standardised rates (Assunção & Reis 1999)", () => {
  const w = rowStandardisedWeights(latticeWeights(5, 5, "rook"));
  const n = w.ids.length;
  const pops = inventedValues(n).map((v) => Math.round(200 + 40 * Math.abs(v)));
  const counts = pops.map((p, i) => Math.round((p * (i % 5)) / 100));

  test("is Moran's I of the standardised values, with its permutation test on the same seed", () => {
    const r = empiricalBayesMoran(counts, pops, w, { permutations: 199, random: createRandomSource(3) });
    const z = empiricalBayesStandardise(counts, pops).standardised;
    const direct = globalMoran(z, w, { permutations: 199, random: createRandomSource(3) });
    expect(r.n).toBe(n);
    expect(r.I).toBe(direct.I);
    expect(Array.from(r.standardised)).toEqual(Array.from(z));
    expect(r.permutation).toEqual(direct.permutation);
    expect(empiricalBayesMoran(counts, pops, w).permutation).toBeNull();
  });

  test("misaligned counts throw", () => {
    expect(() => empiricalBayesMoran(counts.slice(1), pops.slice(1), w)).toThrow(/24 event counts for 25 regions/);
  });
});

describe("hot-spot classes", () => {
  const region = (id: string, z: number | null, p: number | null, pseudoP: number | null) => ({
    id, G: 0, expectedG: 0, varianceG: 0, z, p, pseudoP, pseudoPGreater: null, pseudoPLess: null, neighbours: z === null ? 0 : 2, permutationsUsed: pseudoP === null ? null : 99,
  });
  const result: LocalGetisOrdResult = {
    n: 4,
    star: true,
    permutations: 99,
    regions: [region("a", 3, 0.004, 0.02), region("b", -2.5, 0.012, 0.01), region("c", 0.5, 0.6, 0.7), region("d", null, null, null)],
  };

  test("permutation p decides by default; sign of z gives hot or cold; a region without a test is not counted", () => {
    // none: .02 and .01 ≤ .05. Bonferroni over m = 3 tests: .06 and .03, so only b.
    expect(hotSpotClasses(result, { correction: "none" }).classes).toEqual(["hot", "cold", "not-significant", "not-significant"]);
    const bonferroni = hotSpotClasses(result, { correction: "bonferroni" });
    expect(bonferroni).toMatchObject({ pValueSource: "permutation", tests: 3, classes: ["not-significant", "cold", "not-significant", "not-significant"] });
    expect(bonferroni.adjustedP).toEqual([0.06, 0.03, 1, null]);
  });

  test("analytical p on request (and by default without permutations)", () => {
    // analytical p .004, .012: Bonferroni ×3 = .012, .036 — both significant
    expect(hotSpotClasses(result, { correction: "bonferroni", pValueSource: "analytical" }).classes).toEqual(["hot", "cold", "not-significant", "not-significant"]);
    expect(hotSpotClasses({ ...result, permutations: 0 }).pValueSource).toBe("analytical");
    expect(() => hotSpotClasses({ ...result, permutations: 0 }, { pValueSource: "permutation" })).toThrow(/needs permutations/);
    expect(() => hotSpotClasses(result, { alpha: 1 })).toThrow(/alpha/);
  });
});
