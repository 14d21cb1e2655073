import { catalogueQuerySchema, resolvedRunParamsSchema, RUN_METHOD, runParamsInputSchema, startRunSchema } from "@/lib/runs/schemas";

describe("run parameters", () => {
  it("fills the documented defaults", () => {
    expect(runParamsInputSchema.parse({})).toEqual({
      weights: "queen",
      transform: "row-standardised",
      islandPolicy: "exclude",
      permutations: 999,
      alpha: 0.05,
      correction: "fdr",
      local: true,
      sequential: false,
      rates: "raw",
    });
  });

  it("names the field that is wrong", () => {
    const r = runParamsInputSchema.safeParse({ permutations: 50 });
    expect(r.success).toBe(false);
    expect(r.error?.issues[0].path).toEqual(["permutations"]);
    expect(r.error?.issues[0].message).toBe("Use at least 99 permutations.");
    const w = runParamsInputSchema.safeParse({ weights: "hexagon" });
    expect(w.error?.issues[0].message).toContain('Unknown weights rule "hexagon"');
    expect(startRunSchema.safeParse({}).error?.issues[0].path).toEqual(["panelVersionId"]);
  });

  it("records new runs under method tessera-runs/2 and still reads runs stored under /1, refusing unknown methods", () => {
    expect(RUN_METHOD).toBe("tessera-runs/2");
    const stored = {
      weights: "queen",
      transform: "row-standardised",
      islandPolicy: "exclude",
      permutations: 999,
      seed: 7,
      alpha: 0.05,
      correction: "fdr",
      indicators: ["output_per_head"],
      periods: ["2020"],
      local: false,
      panelVersionId: 1,
      boundaryVersionId: 1,
    };
    expect(resolvedRunParamsSchema.parse({ ...stored, method: "tessera-runs/1" }).method).toBe("tessera-runs/1");
    expect(resolvedRunParamsSchema.parse({ ...stored, method: "tessera-runs/2" }).method).toBe("tessera-runs/2");
    expect(resolvedRunParamsSchema.safeParse({ ...stored, method: "tessera-runs/9" }).success).toBe(false);
  });

  it("parses catalogue filters from the URL", () => {
    expect(catalogueQuerySchema.parse({ class: "clustering,dispersion", from: "2012", run: "4" })).toEqual({
      run: 4,
      class: ["clustering", "dispersion"],
      from: "2012",
      to: null,
      q: null,
      suggestion: [],
    });
    expect(catalogueQuerySchema.safeParse({ class: "maybe" }).success).toBe(false);
  });
});
