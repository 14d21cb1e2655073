/**
 * Reachability of permutation significance. The expected values follow from
 * the definitions (smallest pseudo p = tails/(R+1); Bonferroni bar α/m;
 * Benjamini–Hochberg step-up) and are cross-checked by brute force against the
 * engine's own corrections: k regions at the smallest p, the others at 1.
 */
import fc from "fast-check";
import { adjustPValues, reachableSignificance } from "@/lib/spatial";

/** Brute force: is any region significant when `k` of `m` sit at p and the rest at 1? */
function anySignificant(p: number, k: number, m: number, alpha: number, correction: "none" | "bonferroni" | "fdr"): boolean {
  const values = Array.from({ length: m }, (_, i) => (i < k ? p : 1));
  return adjustPValues(values, correction).some((q) => q !== null && q <= alpha);
}

describe("reachableSignificance", () => {
  test("999 permutations, 49 regions, Bonferroni at 5 %: a region cannot pass; 1,959 permutations would let one", () => {
    const r = reachableSignificance({ permutations: 999, tests: 49, alpha: 0.05, correction: "bonferroni" });
    expect(r.smallestP).toBeCloseTo(0.002, 15);
    expect(r.loneThreshold).toBeCloseTo(0.05 / 49, 15);
    expect(r.loneReachable).toBe(false);
    expect(r.regionsNeeded).toBeNull();
    expect(r.permutationsNeeded).toBe(1959);
    expect(r.suggestedPermutations).toBe(9999);
    expect(reachableSignificance({ permutations: 1959, tests: 49, alpha: 0.05, correction: "bonferroni" }).loneReachable).toBe(true);
    expect(reachableSignificance({ permutations: 1958, tests: 49, alpha: 0.05, correction: "bonferroni" }).loneReachable).toBe(false);
  });

  test("999 permutations, 49 regions, FDR at 5 %: a lone region cannot pass, two regions at the smallest p can", () => {
    const r = reachableSignificance({ permutations: 999, tests: 49, alpha: 0.05, correction: "fdr" });
    expect(r.loneReachable).toBe(false);
    expect(r.regionsNeeded).toBe(2);
    expect(anySignificant(r.smallestP, 1, 49, 0.05, "fdr")).toBe(false);
    expect(anySignificant(r.smallestP, 2, 49, 0.05, "fdr")).toBe(true);
  });

  test("99 permutations and no correction: the folded p cannot go below 0.02, which passes 5 % but not 1 %", () => {
    expect(reachableSignificance({ permutations: 99, tests: 10, alpha: 0.05, correction: "none" }).loneReachable).toBe(true);
    const strict = reachableSignificance({ permutations: 99, tests: 10, alpha: 0.01, correction: "none" });
    expect(strict.loneReachable).toBe(false);
    expect(strict.regionsNeeded).toBeNull();
    expect(strict.permutationsNeeded).toBe(199);
  });

  test("one-sided tests halve the smallest p", () => {
    const r = reachableSignificance({ permutations: 999, tests: 1, alpha: 0.05, correction: "none", alternative: "one-sided" });
    expect(r.smallestP).toBeCloseTo(0.001, 15);
  });

  test("agrees with brute force over the engine's corrections for any R, m, alpha and correction", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 9, max: 20000 }),
        fc.integer({ min: 1, max: 400 }),
        fc.constantFrom(0.01, 0.05, 0.1),
        fc.constantFrom("none" as const, "bonferroni" as const, "fdr" as const),
        (permutations, tests, alpha, correction) => {
          const r = reachableSignificance({ permutations, tests, alpha, correction });
          expect(r.loneReachable).toBe(anySignificant(r.smallestP, 1, tests, alpha, correction));
          if (r.regionsNeeded === null) {
            expect(anySignificant(r.smallestP, tests, tests, alpha, correction)).toBe(false);
          } else {
            expect(anySignificant(r.smallestP, r.regionsNeeded, tests, alpha, correction)).toBe(true);
            if (r.regionsNeeded > 1) expect(anySignificant(r.smallestP, r.regionsNeeded - 1, tests, alpha, correction)).toBe(false);
          }
          const enough = reachableSignificance({ permutations: r.permutationsNeeded, tests, alpha, correction });
          expect(enough.loneReachable).toBe(true);
          if (r.permutationsNeeded > 1) expect(reachableSignificance({ permutations: r.permutationsNeeded - 1, tests, alpha, correction }).loneReachable).toBe(false);
        },
      ),
      { seed: 20261203, numRuns: 500 },
    );
  });

  test("refuses impossible inputs", () => {
    expect(() => reachableSignificance({ permutations: 0, tests: 1, alpha: 0.05, correction: "none" })).toThrow(/Permutations/);
    expect(() => reachableSignificance({ permutations: 99, tests: 0, alpha: 0.05, correction: "none" })).toThrow(/tests/);
    expect(() => reachableSignificance({ permutations: 99, tests: 1, alpha: 1, correction: "none" })).toThrow(/alpha/);
  });
});
