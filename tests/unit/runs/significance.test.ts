import { classifyRows, decidingP, significanceBasis } from "@/lib/runs/significance";

describe("classifyRows", () => {
  const rows = [
    { decidingP: 0.001, I: 0.4, expectedI: -0.004 },
    { decidingP: 0.002, I: -0.3, expectedI: -0.004 },
    { decidingP: 0.04, I: 0.1, expectedI: -0.004 },
    { decidingP: 0.6, I: 0.01, expectedI: -0.004 },
    { decidingP: null, I: null, expectedI: null },
  ];

  it("classes clustering, dispersion and not significant without a correction", () => {
    const out = classifyRows(rows, 0.05, "none");
    expect(out.map((r) => r.significance)).toEqual(["clustering", "dispersion", "clustering", "not-significant", null]);
    expect(out[4]).toEqual({ decidingP: null, adjustedP: null, significance: null });
  });

  it("Bonferroni multiplies by the number of computed rows (4), not by the rows without a p", () => {
    const out = classifyRows(rows, 0.05, "bonferroni");
    expect(out.map((r) => r.adjustedP)).toEqual([0.004, 0.008, 0.16, 1, null]);
    expect(out.map((r) => r.significance)).toEqual(["clustering", "dispersion", "not-significant", "not-significant", null]);
  });

  it("FDR (Benjamini–Hochberg) adjusts step-up", () => {
    const out = classifyRows(rows, 0.05, "fdr");
    expect(out[0].adjustedP).toBeCloseTo(0.004, 12);
    expect(out[1].adjustedP).toBeCloseTo(0.004, 12);
    expect(out[2].adjustedP).toBeCloseTo(0.04 * 4 / 3, 12);
    expect(out[2].significance).toBe("not-significant");
  });
});

describe("decidingP and the basis sentence", () => {
  it("prefers the permutation pseudo p over the randomisation p", () => {
    expect(decidingP({ permutation: { pTwoSided: 0.02 } as never, moran: { pRandomisation: 0.01 } as never })).toEqual({ p: 0.02, source: "permutation" });
    expect(decidingP({ permutation: null, moran: { pRandomisation: 0.01 } as never })).toEqual({ p: 0.01, source: "randomisation" });
    expect(decidingP({ permutation: null, moran: null })).toEqual({ p: null, source: null });
  });

  it("states which p and which correction decide", () => {
    expect(significanceBasis({ permutations: 999, correction: "fdr", alpha: 0.05 }, 119)).toBe(
      "Classes use the two-sided permutation pseudo p (999 permutations), adjusted by false discovery rate (Benjamini–Hochberg) across the 119 computed indicator-periods of this run, at α = 0.05.",
    );
    expect(significanceBasis({ permutations: 99, correction: "none", alpha: 0.1 }, 1)).toContain("with no correction for the 1 computed indicator-period of this run");
  });
});
