import {
  chiSquareUpperTail,
  clusterTransitions,
  createRandomSource,
  empiricalBayesStandardise,
  globalMoran,
  latticeWeights,
  localMoran,
  logGamma,
  moranOfChange,
  moranPanel,
  normalTailProbabilities,
  normalUpperTail,
  pairedMoranChangeTest,
  prepareAnalysis,
  rowStandardisedWeights,
  spatialMarkov,
  transitionTable,
} from "@/lib/spatial";
import { inventedValues } from "./helpers";

const base = latticeWeights(5, 5, "rook");
const byId = (values: number[]) => new Map(base.ids.map((id, i) => [id, values[i]] as [string, number]));
const options = { islandPolicy: "keep" as const, transform: "row-standardised" as const, permutations: 499, seed: 21 };

describe("preparation of a period", () => {
  test("missing and non-numeric values are dropped and counted, never zero; W is re-standardised", () => {
    const values = new Map<string, number | null>(base.ids.map((id, i) => [id, i]));
    values.set("r0c1", null);
    values.delete("r0c2");
    const prepared = prepareAnalysis(base, values, { islandPolicy: "keep", transform: "row-standardised" });
    expect(prepared.report.droppedCounts).toEqual({ missing: 2, "not-a-number": 0, "island-excluded": 0 });
    expect(prepared.report.regionsUsed).toBe(23);
    expect(prepared.ids).not.toContain("r0c1");
    // r0c0 lost r0c1 and keeps only r1c0: its single weight is re-standardised to 1
    const i = prepared.ids.indexOf("r0c0");
    expect(prepared.weights.offsets[i + 1] - prepared.weights.offsets[i]).toBe(1);
    expect(prepared.weights.weights[prepared.weights.offsets[i]]).toBe(1);
    expect(Array.from(prepared.values)).not.toContain(NaN);
  });

  test("a region cut off by missing neighbours is an island, handled by the policy and reported", () => {
    const values = base.ids.map((_, i) => i as number | null);
    values[1] = null; // r0c1
    values[5] = null; // r1c0 — r0c0 now has no neighbour with a value
    const excluded = prepareAnalysis(base, values, { islandPolicy: "exclude", transform: "binary" });
    expect(excluded.report.islands).toEqual(["r0c0"]);
    expect(excluded.report.dropped).toContainEqual({ id: "r0c0", reason: "island-excluded" });
    expect(excluded.report.regionsUsed).toBe(22);
    const kept = prepareAnalysis(base, values, { islandPolicy: "keep", transform: "binary" });
    expect(kept.report.regionsUsed).toBe(23);
  });
});

describe("panels with common random numbers", () => {
  test("each period uses the same relabellings: an affine copy of a period gets identical permutation p-values", () => {
    const y = inventedValues(25);
    const panel = moranPanel(base, [
      { label: "2019", values: byId(y) },
      { label: "2020", values: byId(y.map((v) => 3 * v - 7)) },
    ], options);
    const [first, second] = panel.periods.map((p) => p.result.permutation!);
    expect(second.pGreater).toBe(first.pGreater);
    expect(second.countAtLeast).toBe(first.countAtLeast);
    expect(second.mean).toBeCloseTo(first.mean, 12);
    // and the same draws as a single call with a generator seeded alike
    const single = globalMoran(y, rowStandardisedWeights(base), { permutations: 499, random: createRandomSource(21) });
    expect(first.countAtLeast).toBe(single.permutation!.countAtLeast);
  });

  test("paired test of the change: no change ⇒ every permuted change is 0 and p two-sided = 1", () => {
    const y = inventedValues(25);
    const result = pairedMoranChangeTest(base, byId(y), byId(y.map((v) => 2 * v + 1)), options);
    expect(result.change).toBeCloseTo(0, 12);
    expect(result.permutation!.pTwoSided).toBe(1);
    expect(result.permutation!.sd).toBeLessThan(1e-12);
  });

  test("paired test of the change: from no pattern to a strong gradient ⇒ a positive change with small p", () => {
    const noise = inventedValues(25);
    const gradient = base.ids.map((_, i) => Math.floor(i / 5) * 10 + (i % 5) * 10 + noise[i] * 0.1);
    const result = pairedMoranChangeTest(base, byId(noise), byId(gradient), options);
    expect(result.laterI).toBeGreaterThan(result.earlierI);
    expect(result.change).toBeCloseTo(result.laterI - result.earlierI, 15);
    expect(result.permutation!.pGreater).toBeLessThan(0.01);
  });

  test("Moran's I of the change analyses later − earlier (the sign is visible)", () => {
    const earlier = inventedValues(25);
    const rise = base.ids.map((_, i) => (i % 5 < 2 ? 5 : 0) + inventedValues(25, 3)[i] * 0.2);
    const later = earlier.map((v, i) => v + rise[i]);
    const result = moranOfChange(base, byId(earlier), byId(later), options);
    expect(result.direction).toBe("later-minus-earlier");
    const direct = globalMoran(rise, rowStandardisedWeights(base));
    expect(result.result.I).toBeCloseTo(direct.I, 10);
    // reversing the periods negates the change, and I is unchanged (I(−x) = I(x)); the direction label is what tells them apart
    expect(moranOfChange(base, byId(later), byId(earlier), options).result.I).toBeCloseTo(direct.I, 10);
  });

  test("bad seeds and permutation counts throw", () => {
    expect(() => moranPanel(base, [], { ...options, seed: 1.5 })).toThrow(/integer/);
    expect(() => moranPanel(base, [], { ...options, permutations: 5 })).toThrow(/99 to 99,999/);
    expect(() => moranPanel(base, [{ label: "2001", values: byId(base.ids.map(() => 4)) }], options)).toThrow(/Period "2001": .*constant/);
  });
});

describe("empirical Bayes standardisation (Assunção & Reis 1999)", () => {
  test("hand-worked example: equal populations 10, events 1, 2, 3", () => {
    // r = .1 .2 .3; b = 6/30 = .2; s² = 10·(.01 + 0 + .01)/30 = 1/150; a = 1/150 − .2/10 = −1/75;
    // v = a + b/10 = 1/150 > 0; z = ±0.1/sqrt(1/150) = ±sqrt(1.5)
    const result = empiricalBayesStandardise([1, 2, 3], [10, 10, 10]);
    expect(result.globalRate).toBeCloseTo(0.2, 15);
    expect(result.betweenVariance).toBeCloseTo(-1 / 75, 15);
    expect(Array.from(result.standardised).map((v) => Number(v.toFixed(12)))).toEqual([
      -Number(Math.sqrt(1.5).toFixed(12)),
      0,
      Number(Math.sqrt(1.5).toFixed(12)),
    ]);
  });

  test("a non-positive variance falls back to b / P_i; bad inputs throw", () => {
    const result = empiricalBayesStandardise([5, 5, 5, 5], [100, 100, 100, 100]); // s² = 0 ⇒ a = −b/P̄ ⇒ v = 0
    result.variances.forEach((v) => expect(v).toBeCloseTo(0.05 / 100, 15));
    expect(() => empiricalBayesStandardise([1, 2], [10, 0])).toThrow(/populations must be finite and > 0/);
    expect(() => empiricalBayesStandardise([0, 0], [10, 10])).toThrow(/no events/);
    expect(() => empiricalBayesStandardise([1, -2], [10, 10])).toThrow(/≥ 0/);
  });
});

describe("transitions and spatial Markov", () => {
  test("transition tables count class changes", () => {
    const table = transitionTable(["low", "high"], ["low", "low", "high"], ["low", "high", "high"]);
    expect(table.counts).toEqual([[1, 1], [0, 1]]);
    expect(table.probabilities).toEqual([[0.5, 0.5], [0, 1]]);
  });

  test("cluster transitions match regions by id", () => {
    const w = rowStandardisedWeights(latticeWeights(4, 4, "rook"));
    const a = localMoran(inventedValues(16), w);
    const b = localMoran(inventedValues(16, 1), w);
    const { table, unmatched } = clusterTransitions(a, b);
    expect(unmatched).toBe(0);
    expect(table.counts.flat().reduce((s, v) => s + v, 0)).toBe(16);
  });

  test("spatial Markov: the conditional tables add up to the pooled one and p is the chi-square tail of Q", () => {
    // Q, its degrees of freedom and p are checked against R in spatial-markov-reference.test.ts.
    const w = rowStandardisedWeights(latticeWeights(6, 6, "queen"));
    const y0 = inventedValues(36);
    const y1 = inventedValues(36, 0.5);
    const result = spatialMarkov(y0, y1, w, { classes: 3 });
    const summed = result.conditional.reduce(
      (acc, t) => acc.map((row, i) => row.map((v, j) => v + t.counts[i][j])),
      [[0, 0, 0], [0, 0, 0], [0, 0, 0]],
    );
    expect(summed).toEqual(result.pooled.counts);
    expect(result.pooled.counts.flat().reduce((a, b) => a + b, 0)).toBe(36);
    expect(result.degreesOfFreedom).toBeGreaterThan(0);
    expect(result.p).toBe(chiSquareUpperTail(result.chiSquare, result.degreesOfFreedom));
    expect(() => spatialMarkov(y0, y1, w, { classes: 1 })).toThrow(/classes/);
  });

  test("spatial Markov: identical periods move nobody, so Q = 0 with no degrees of freedom and no p", () => {
    const w = rowStandardisedWeights(latticeWeights(6, 6, "queen"));
    const y = inventedValues(36);
    const result = spatialMarkov(y, y, w, { classes: 3 });
    result.pooled.counts.forEach((row, i) => row.forEach((v, j) => i !== j && expect(v).toBe(0)));
    expect(result.chiSquare).toBe(0);
    expect(result.degreesOfFreedom).toBe(0);
    expect(result.p).toBeNaN();
  });
});

describe("reference distributions", () => {
  // The check values against R's qnorm/pnorm/qchisq/pchisq are in distributions-reference.test.ts;
  // these are identities that hold exactly.
  test("normal tail: P(Z ≥ 0) = ½ and the two tails are mirror images", () => {
    expect(normalUpperTail(0)).toBe(0.5);
    for (const z of [0.3, 1.7, 4.2]) expect(normalTailProbabilities(-z).pLess).toBe(normalUpperTail(z));
  });

  test("chi-square tail with df 2 is e^{-x/2} exactly (the exponential distribution)", () => {
    for (const x of [0.4, 3, 7.3, 30, 300]) expect(Math.abs(chiSquareUpperTail(x, 2) / Math.exp(-x / 2) - 1)).toBeLessThan(1e-14);
  });

  test("log Γ: Γ(5) = 24, Γ(½) = √π", () => {
    expect(Math.exp(logGamma(5))).toBeCloseTo(24, 11);
    expect(Math.exp(logGamma(0.5))).toBeCloseTo(Math.sqrt(Math.PI), 13);
  });
});
