/**
 * The run option "sequential Monte Carlo p-values" (Besag & Clifford 1991)
 * from the form's choice to the stored local results: off by default, stored
 * as h = SEQUENTIAL_EXTREMES only when asked, and a run without it computes
 * (and stores) exactly what a run computed before the option existed.
 */
import { prepareAnalysis } from "@/lib/spatial";
import { computeLocal, computePeriod, type PeriodParams } from "@/lib/runs/compute";
import { resolvedRunParamsSchema, runParamsInputSchema, SEQUENTIAL_EXTREMES } from "@/lib/runs/schemas";
import { RESULT_COLUMNS, resultRowValues } from "@/lib/runs/store";
import { rookLattice } from "./lattice";

const base = rookLattice(8);
// One hot corner in otherwise patternless values: a few strong local clusters, most regions far from significance.
const values = new Map<string, number | null>();
for (let i = 0; i < 64; i++) values.set(`r${i}`, ((i * 7919) % 17) / 4 + (i % 8 < 3 && i < 24 ? 12 : 0));
const prepared = prepareAnalysis(base, values, { islandPolicy: "exclude", transform: "row-standardised" });
const fixedParams: PeriodParams = {
  weights: "rook",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 999,
  seed: 42,
  alpha: 0.05,
  correction: "fdr",
  local: true,
};

describe("sequential p-values as a run option", () => {
  it("is off unless asked for, and accepts only a yes or no", () => {
    expect(runParamsInputSchema.parse({}).sequential).toBe(false);
    expect(runParamsInputSchema.parse({ sequential: true }).sequential).toBe(true);
    const bad = runParamsInputSchema.safeParse({ sequential: "sometimes" });
    expect(bad.success).toBe(false);
    expect(bad.error?.issues[0].path).toEqual(["sequential"]);
  });

  it("is stored as h and read back; stored runs without it still read, and a nonsense h is refused", () => {
    const stored = {
      ...fixedParams,
      indicators: ["x"],
      periods: ["2020"],
      panelVersionId: 1,
      boundaryVersionId: 1,
      method: "tessera-runs/2",
    };
    expect(SEQUENTIAL_EXTREMES).toBe(20);
    expect("sequentialExtremes" in resolvedRunParamsSchema.parse(stored)).toBe(false);
    expect(resolvedRunParamsSchema.parse({ ...stored, sequentialExtremes: SEQUENTIAL_EXTREMES }).sequentialExtremes).toBe(20);
    expect(resolvedRunParamsSchema.safeParse({ ...stored, sequentialExtremes: 0 }).success).toBe(false);
    expect(resolvedRunParamsSchema.safeParse({ ...stored, sequentialExtremes: 2.5 }).success).toBe(false);
  });

  it("without the option stores the same local JSON as before it existed (no new keys, every region at R)", () => {
    const local = computeLocal(prepared, fixedParams);
    expect(Object.keys(local).sort()).toEqual(
      ["Ii", "adjustedP", "alpha", "cluster", "correction", "counts", "ids", "lag", "moments", "pseudoP", "quadrant", "slope", "standardised", "z"].sort(),
    );
    const row = computePeriod({ baseWeights: base }, fixedParams, "x", "2020", values);
    const stored = resultRowValues(1, 0, { ...row, deltaI: null });
    expect(String(stored[RESULT_COLUMNS.indexOf("local")])).not.toContain("permutationsUsed");
  });

  it("with the option records the draws of every region; regions it does not stop equal the fixed-count run bit for bit", () => {
    const fixed = computeLocal(prepared, fixedParams);
    const sequential = computeLocal(prepared, { ...fixedParams, sequentialExtremes: SEQUENTIAL_EXTREMES });
    expect(sequential.sequentialExtremes).toBe(20);
    const used = sequential.permutationsUsed ?? [];
    expect(used).toHaveLength(64);
    const stopped = used.filter((u) => u !== null && u < 999).length;
    expect(sequential.stopped).toBe(stopped);
    expect(stopped).toBeGreaterThan(0);
    expect(stopped).toBeLessThan(64);
    used.forEach((u, i) => {
      if (u === 999) {
        expect(sequential.pseudoP[i]).toBe(fixed.pseudoP[i]);
        expect(sequential.Ii[i]).toBe(fixed.Ii[i]);
      } else {
        // A stopped region's folded p is at least 2h/R: never near a usual alpha.
        expect(sequential.pseudoP[i]).toBeGreaterThanOrEqual((2 * 20) / 999);
        expect(sequential.cluster[i]).toBe("not-significant");
      }
    });
    // The statistics themselves do not depend on how many draws were made.
    expect(sequential.Ii).toEqual(fixed.Ii);
    expect(sequential.z).toEqual(fixed.z);
    expect(sequential.slope).toBe(fixed.slope);
  });

  it("changes nothing but the local statistics of a period", () => {
    const fixed = computePeriod({ baseWeights: base }, fixedParams, "x", "2020", values);
    const sequential = computePeriod({ baseWeights: base }, { ...fixedParams, sequentialExtremes: 20 }, "x", "2020", values);
    expect(sequential.moran).toEqual(fixed.moran);
    expect(sequential.permutation).toEqual(fixed.permutation);
    expect(sequential.geary).toEqual(fixed.geary);
    expect(sequential.generalG).toEqual(fixed.generalG);
  });
});
