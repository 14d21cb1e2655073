import {
  adjustPValues,
  createRandomSource,
  globalMoran,
  latticeWeights,
  localGetisOrd,
  localMoran,
  rowStandardisedWeights,
  significantAfterCorrection,
  weightsFromNeighbourLists,
  withSelfLinks,
} from "@/lib/spatial";
import { allPermutations, exactMoments, inventedValues } from "./helpers";

const ids = ["a", "b", "c", "d", "e", "f"];
const binary = weightsFromNeighbourLists(ids, [[1, 2], [0, 2, 3], [0, 1, 4], [1, 5], [1, 2, 5], [3]], { rule: "test" });
const W = rowStandardisedWeights(binary);
const values = [1.2, 3.5, 0.4, 2.2, 5.1, 0.9];

describe("local Moran's I", () => {
  test("Σ_i I_i = S0 · I (Anselin 1995: the LISAs add up to the global statistic); with W, Σ I_i = n·I", () => {
    const w = rowStandardisedWeights(latticeWeights(5, 5, "queen"));
    const x = inventedValues(25);
    const total = localMoran(x, w).regions.reduce((s, r) => s + r.Ii, 0);
    expect(total).toBeCloseTo(25 * globalMoran(x, w).I, 10);
  });

  test("total-randomisation moments equal the exact moments over all 720 arrangements", () => {
    const result = localMoran(values, W, { moments: "total" });
    expect(result.moments).toBe("total");
    const arrangements = allPermutations(values);
    for (const i of [0, 1, 5]) {
      const exact = exactMoments(arrangements.map((p) => localMoran(p, W).regions[i].Ii));
      expect(exact.mean).toBeCloseTo(result.regions[i].expectedIi!, 12);
      expect(exact.variance).toBeCloseTo(result.regions[i].varianceIi!, 12);
    }
  });

  test("conditional-randomisation moments (Sokal et al. 1998) equal the exact moments with z_i held fixed", () => {
    const result = localMoran(values, W, { moments: "conditional" });
    expect(result.moments).toBe("conditional");
    for (const i of [0, 2, 4]) {
      const others = values.filter((_, j) => j !== i);
      const draws = allPermutations(others).map((p) => localMoran([...p.slice(0, i), values[i], ...p.slice(i)], W).regions[i].Ii);
      const exact = exactMoments(draws);
      expect(exact.mean).toBeCloseTo(result.regions[i].expectedIi!, 12);
      expect(exact.variance).toBeCloseTo(result.regions[i].varianceIi!, 12);
    }
  });

  test("conditional permutations: seeded, p in [1/(R+1), 1], and their mean/sd approach the conditional moments", () => {
    const a = localMoran(values, W, { permutations: 9999, random: createRandomSource(12) });
    const b = localMoran(values, W, { permutations: 9999, random: createRandomSource(12) });
    expect(b.regions).toEqual(a.regions);
    for (const r of a.regions) {
      expect(r.pseudoP!).toBeGreaterThanOrEqual(1 / 10000);
      expect(r.pseudoP!).toBeLessThanOrEqual(1);
      expect(r.pseudoP!).toBeCloseTo(Math.min(1, 2 * Math.min(r.pseudoPGreater!, r.pseudoPLess!)), 15);
      expect(Math.abs(r.permutationMean! - r.expectedIi!)).toBeLessThan((4 * r.permutationSd!) / Math.sqrt(9999) + 1e-12);
      expect(r.permutationSd! ** 2 / r.varianceIi!).toBeGreaterThan(0.93);
      expect(r.permutationSd! ** 2 / r.varianceIi!).toBeLessThan(1.07);
    }
  });

  test("a tiny exhaustive check of the pseudo p: on a 4-region path the exact conditional tail is reproduced", () => {
    // region 1 (value 10) has neighbours 0 and 2 among the other values {1, 2, 3}: the observed neighbour
    // pair {1, 2} gives the smallest possible lag; exact P(lag ≤ observed) = 2/6 ordered draws = 1/3.
    const path = weightsFromNeighbourLists(["p", "q", "r", "s"], [[1], [0, 2], [1, 3], [2]], { rule: "path" });
    const result = localMoran([1, 10, 2, 3], path, { permutations: 99999, random: createRandomSource(4) });
    const q = result.regions[1];
    // z_q > 0, so small lags are small I: pLess ≈ (M≤ + 1)/(R + 1) ≈ 1/3
    expect(q.pseudoPLess!).toBeCloseTo(1 / 3, 2);
  });

  test("quadrants come from the signs of z_i and of its lag; a cluster needs its adjusted p at most α", () => {
    // Two blocks on a 4×4 lattice: high on the left half, low on the right half (invented).
    const x = Array.from({ length: 16 }, (_, i) => (i % 4 < 2 ? 10 + (i % 3) : 1 + (i % 2)));
    const w = rowStandardisedWeights(latticeWeights(4, 4, "rook"));
    const result = localMoran(x, w, { permutations: 999, random: createRandomSource(1), alpha: 0.05, correction: "none" });
    expect(result.regions[0].quadrant).toBe("HH");
    expect(result.regions[3].quadrant).toBe("LL");
    for (const r of result.regions) {
      if (r.cluster !== "not-significant") expect(r.cluster).toBe(r.quadrant);
      expect(r.cluster === "not-significant").toBe(!(r.adjustedP! <= 0.05));
    }
  });

  test("corrections over local results: with 20 regions significant uncorrected, FDR keeps 14 and Bonferroni 9, dropping the weakest", () => {
    // 8×8 queen lattice: a high 3×3 block in one corner, a low one in the opposite corner, texture elsewhere
    // (invented). 9,999 permutations, so the smallest two-sided p (0.0002) can pass Bonferroni over 64 tests.
    const w = rowStandardisedWeights(latticeWeights(8, 8, "queen"));
    const x = inventedValues(64).map((v, i) => {
      const [r, c] = [Math.floor(i / 8), i % 8];
      return (r < 3 && c < 3 ? 10 : r >= 5 && c >= 5 ? -10 : 0) + v;
    });
    const run = (correction: "none" | "fdr" | "bonferroni") =>
      localMoran(x, w, { permutations: 9999, random: createRandomSource(11), alpha: 0.05, correction });
    const [none, fdr, bonferroni] = [run("none"), run("fdr"), run("bonferroni")];
    const significant = (res: typeof none) => new Set(res.regions.flatMap((r, i) => (r.cluster === "not-significant" ? [] : [i])));
    const p = none.regions.map((r) => r.pseudoP!);
    // The correction changes the adjusted p and the classes only: the same draws give the same pseudo p.
    expect(fdr.regions.map((r) => r.pseudoP)).toEqual(p);
    expect(bonferroni.regions.map((r) => r.pseudoP)).toEqual(p);
    expect(bonferroni.tests).toBe(64);
    expect(bonferroni.regions.map((r) => r.adjustedP)).toEqual(p.map((v) => Math.min(1, 64 * v)));

    // Benjamini–Hochberg from its definition: reject every p ≤ p_(k), k the largest rank with p_(k) ≤ k·α/m.
    const sorted = [...p].sort((a, b) => a - b);
    let k = 0;
    sorted.forEach((v, rank) => {
      if (v <= ((rank + 1) * 0.05) / 64) k = rank + 1;
    });
    const bhBar = k > 0 ? sorted[k - 1] : -1;
    const expectedFdr = new Set(p.flatMap((v, i) => (v <= bhBar ? [i] : [])));
    const expectedBonferroni = new Set(p.flatMap((v, i) => (64 * v <= 0.05 ? [i] : [])));

    const [s0, s1, s2] = [significant(none), significant(fdr), significant(bonferroni)];
    expect([s0.size, s1.size, s2.size]).toEqual([20, 14, 9]);
    expect(s1).toEqual(expectedFdr);
    expect(s2).toEqual(expectedBonferroni);
    // Nested: Bonferroni ⊂ FDR ⊂ uncorrected, and every region dropped has a larger p than every region kept.
    for (const i of s2) expect(s1.has(i)).toBe(true);
    for (const i of s1) expect(s0.has(i)).toBe(true);
    const droppedByFdr = [...s0].filter((i) => !s1.has(i));
    const droppedByBonferroni = [...s1].filter((i) => !s2.has(i));
    expect(droppedByFdr).toHaveLength(6);
    expect(droppedByBonferroni).toHaveLength(5);
    expect(Math.min(...droppedByFdr.map((i) => p[i]))).toBeGreaterThan(Math.max(...[...s1].map((i) => p[i])));
    expect(Math.min(...droppedByBonferroni.map((i) => p[i]))).toBeGreaterThan(Math.max(...[...s2].map((i) => p[i])));
    // A dropped region keeps its quadrant but is no longer a cluster; a kept one is the cluster of its quadrant.
    for (const i of [...droppedByFdr, ...droppedByBonferroni]) {
      expect(bonferroni.regions[i].cluster).toBe("not-significant");
      expect(bonferroni.regions[i].quadrant).toBe(none.regions[i].quadrant);
      expect(none.regions[i].cluster).toBe(none.regions[i].quadrant);
    }
    for (const i of s2) expect(bonferroni.regions[i].cluster).toBe(none.regions[i].quadrant);
    // Both corners survive Bonferroni.
    expect(new Set([...s2].map((i) => bonferroni.regions[i].cluster))).toEqual(new Set(["HH", "LL"]));
  });

  test("islands get no inference and the class no-neighbours; they are not counted as tests", () => {
    const w = weightsFromNeighbourLists(["a", "b", "c", "d", "e"], [[1], [0, 2], [1, 3], [2], []], { rule: "t" });
    const result = localMoran([1, 4, 2, 8, 3], w, { permutations: 99, random: createRandomSource(2) });
    expect(result.regions[4]).toMatchObject({ cluster: "no-neighbours", z: null, p: null, pseudoP: null, neighbours: 0 });
    expect(result.tests).toBe(4);
  });

  test("inputs that must throw", () => {
    expect(() => localMoran([1, 1, 1, 1, 1, 1], W)).toThrow(/constant/);
    expect(() => localMoran(values, W, { alpha: 1.5 })).toThrow(/alpha/);
    expect(() => localMoran(values, W, { pValueSource: "permutation" })).toThrow(/permutations > 0/);
    expect(() => localMoran(values, withSelfLinks(binary))).toThrow(/linked to itself/);
    expect(() => localMoran(values, W, { permutations: 10, random: createRandomSource(1) })).toThrow(/99 to 99,999/);
  });
});

describe("multiple-testing corrections", () => {
  test("Benjamini–Hochberg and Bonferroni on a hand-worked example (from the definitions)", () => {
    // sorted p: 0.01 (rank 1), 0.03 (2), 0.04 (3); m = 3: m·p/rank = 0.03, 0.045, 0.04 → step-down minima 0.03, 0.04, 0.04
    expect(adjustPValues([0.01, 0.04, 0.03], "fdr")).toEqual([0.03, 0.04, 0.04]);
    expect(adjustPValues([0.01, 0.04, 0.5, null], "bonferroni")).toEqual([0.03, 0.12, 1, null]);
    expect(significantAfterCorrection([0.001, 0.02, 0.2], 0.05, "bonferroni")).toEqual([true, false, false]);
    expect(significantAfterCorrection([0.001, 0.02, 0.2], 0.05, "fdr")).toEqual([true, true, false]);
    expect(() => adjustPValues([1.5], "fdr")).toThrow(/\[0, 1\]/);
  });
});

describe("local Getis–Ord Gi and Gi*", () => {
  test("Gi* z-scores: moments equal the exact moments of Σ_j w*_ij x_j over all 720 arrangements (total randomisation)", () => {
    const result = localGetisOrd(values, binary, { star: true });
    for (const i of [0, 3]) {
      const exact = exactMoments(allPermutations(values).map((p) => localGetisOrd(p, binary, { star: true }).regions[i].G));
      expect(exact.mean).toBeCloseTo(result.regions[i].expectedG, 12);
      expect(exact.variance).toBeCloseTo(result.regions[i].varianceG, 12);
      const r = result.regions[i];
      expect(r.z!).toBeCloseTo((r.G - r.expectedG) / Math.sqrt(r.varianceG), 10);
    }
  });

  test("Gi (no star): moments equal the exact moments with x_i held fixed (conditional randomisation)", () => {
    const result = localGetisOrd(values, binary, { star: false });
    for (const i of [1, 4]) {
      const others = values.filter((_, j) => j !== i);
      const draws = allPermutations(others).map((p) => localGetisOrd([...p.slice(0, i), values[i], ...p.slice(i)], binary, { star: false }).regions[i].G);
      const exact = exactMoments(draws);
      expect(exact.mean).toBeCloseTo(result.regions[i].expectedG, 12);
      expect(exact.variance).toBeCloseTo(result.regions[i].varianceG, 12);
    }
  });

  test("row-standardised Gi* (self-weight = mean row weight, re-standardised) has the same z as binary Gi*", () => {
    const zBinary = localGetisOrd(values, binary, { star: true }).regions.map((r) => r.z);
    const zW = localGetisOrd(values, W, { star: true }).regions.map((r) => r.z);
    zW.forEach((z, i) => expect(z!).toBeCloseTo(zBinary[i]!, 10));
  });

  test("hot spot gets z > 0 and a small permutation p; seeded", () => {
    const x = Array.from({ length: 25 }, (_, i) => (i === 12 || i === 7 || i === 11 || i === 13 || i === 17 ? 20 : 2 + (i % 3)));
    const w = latticeWeights(5, 5, "rook");
    const a = localGetisOrd(x, w, { permutations: 999, random: createRandomSource(6) });
    expect(a.regions[12].z!).toBeGreaterThan(2);
    expect(a.regions[12].pseudoPGreater!).toBeLessThan(0.05);
    expect(localGetisOrd(x, w, { permutations: 999, random: createRandomSource(6) }).regions).toEqual(a.regions);
  });
});
