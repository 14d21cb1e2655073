/**
 * The words of the reachability warning (start form) and notes (map,
 * catalogue): when the smallest permutation p cannot pass the correction for
 * the number of tests, say so, with the smallest p, the bar, how many regions
 * must reach the smallest p under FDR, and the permutations needed.
 */
import { adjustPValues } from "@/lib/spatial";
import { formatSmallP, localReachability, localTests, reachabilityWarning, startFormReachability } from "@/lib/runs/reachability";

const local = (tests: number, correction: "none" | "bonferroni" | "fdr", permutations = 999, alpha = 0.05, sequential = false) =>
  reachabilityWarning({ scope: "local", tests, permutations, alpha, correction, sequential });

describe("reachability warning", () => {
  it("Bonferroni over 49 regions with 999 permutations: no region can pass; says the smallest p, the bar and 9,999", () => {
    const w = local(49, "bonferroni");
    expect(w).not.toBeNull();
    expect(w?.regionsNeeded).toBeNull();
    expect(w?.text).toBe(
      "With 999 permutations the smallest two-sided permutation p a region can get is 0.002. " +
        "Bonferroni over 49 regions asks p ≤ 0.00102 (α = 0.05 ÷ 49), so no region can be significant, however strong the pattern. " +
        "A region on its own needs at least 1,959 permutations; run 9,999. " +
        "When raising the permutations, turn on sequential p-values (Besag & Clifford): regions far from significance stop early, so the extra permutations stay cheap.",
    );
    expect(w?.note).toBe(
      "Not reachable: with 999 permutations no region can pass Bonferroni over 49 regions (needs p ≤ 0.00102, smallest p 0.002); 9,999 permutations needed.",
    );
  });

  it("FDR over 49 regions with 999 permutations: a lone region cannot pass, two at the smallest p can — and that is what the engine's correction does", () => {
    const w = local(49, "fdr");
    expect(w?.regionsNeeded).toBe(2);
    expect(w?.text).toContain("a region on its own needs p ≤ 0.00102 (α = 0.05 ÷ 49)");
    expect(w?.text).toContain("only when at least 2 regions all reach p = 0.002 together");
    expect(w?.text).toContain("run 9,999");
    expect(w?.note).toBe("Reachable only if at least 2 regions reach p = 0.002 (FDR over 49 regions); a region on its own needs 9,999 permutations.");
    // The sentence is true of the correction the runs use.
    const rest = Array.from({ length: 47 }, () => 0.5);
    expect(adjustPValues([0.002, ...rest, 0.5], "fdr")[0]).toBeGreaterThan(0.05);
    expect(adjustPValues([0.002, 0.002, ...rest], "fdr")[0]).toBeLessThanOrEqual(0.05);
  });

  it("says nothing when a lone region can pass, or when there is nothing to test", () => {
    expect(local(24, "bonferroni")).toBeNull(); // 0.05/24 ≈ 0.00208 ≥ 0.002
    expect(local(49, "bonferroni", 9999)).toBeNull();
    expect(local(49, "none")).toBeNull();
    expect(local(0, "bonferroni")).toBeNull();
  });

  it("with no correction, a smallest p above alpha itself is unreachable for any number of regions", () => {
    const w = local(49, "none", 99, 0.01);
    expect(w?.text).toContain("the smallest two-sided permutation p a region can get is 0.02. That is above α = 0.01 itself");
    expect(w?.note).toBe("Not reachable: with 99 permutations the smallest p 0.02 is above α = 0.01, so no region can be significant; 999 permutations needed.");
  });

  it("when the permutations needed exceed what a run allows, says so instead of suggesting an impossible count", () => {
    const w = local(20_000, "bonferroni");
    expect(w?.withinLimit).toBe(false);
    expect(w?.text).toContain("at least 799,999 permutations, more than the 99,999 a run allows");
    expect(w?.text).not.toContain("sequential");
    expect(w?.note).toContain("more than 99,999 permutations needed");
  });

  it("recommends sequential p-values only for local statistics, and acknowledges them when already on", () => {
    expect(local(49, "bonferroni", 999, 0.05, true)?.text).toContain("Sequential p-values are on, so regions far from significance stop after 20 extreme draws");
    const global = reachabilityWarning({ scope: "global", tests: 300, permutations: 999, alpha: 0.05, correction: "bonferroni", sequential: false });
    expect(global?.text).toContain("an indicator-period can get is 0.002");
    expect(global?.text).toContain("Bonferroni over 300 indicator-periods");
    expect(global?.text).not.toContain("sequential");
  });

  it("counts the tests of a stored period as its regions with neighbours", () => {
    const stored = { cluster: ["HH", "not-significant", "no-neighbours", ...Array.from({ length: 47 }, () => "LL" as const)] as ("HH" | "LL" | "not-significant" | "no-neighbours")[] };
    expect(localTests(stored)).toBe(49);
    const params = { permutations: 999, alpha: 0.05, correction: "bonferroni" as const };
    expect(localReachability(params, stored)?.tests).toBe(49);
    expect(localReachability({ ...params, sequentialExtremes: 20 }, stored)?.text).toContain("Sequential p-values are on");
    expect(localReachability(params, null)).toBeNull();
  });

  it("the start form warns for local clusters over the panel's regions and for the run's classes over indicators × periods", () => {
    const choice = { regions: 49, indicators: 2, periods: 2, permutations: 999, alpha: 0.05, correction: "bonferroni" as const, local: true, sequential: false };
    expect(startFormReachability(choice).map((w) => [w.scope, w.tests])).toEqual([["local", 49]]);
    expect(startFormReachability({ ...choice, local: false })).toEqual([]);
    expect(startFormReachability({ ...choice, indicators: 30, periods: 10 }).map((w) => [w.scope, w.tests])).toEqual([
      ["local", 49],
      ["global", 300],
    ]);
  });

  it("formats small p without exponents down to a millionth", () => {
    expect(formatSmallP(0.05 / 49)).toBe("0.00102");
    expect(formatSmallP(0.05 / 3000)).toBe("0.0000167");
    expect(formatSmallP(1.5e-8)).toBe("1.5 × 10^-8");
  });
});
