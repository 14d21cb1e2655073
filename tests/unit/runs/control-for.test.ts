import { prepareAnalysis } from "@/lib/spatial";
import { regressionDiagnostics } from "@/lib/spatial/regression";
import { computePeriod, computeRegression, type PeriodParams, type RunGeometry } from "@/lib/runs/compute";
import { controlForLabel, runLabel } from "@/lib/runs/label";
import { catalogueQuerySchema, MAX_CONTROL_FOR, resolvedRunParamsSchema, runParamsInputSchema } from "@/lib/runs/schemas";
import { rookLattice } from "./lattice";

// "Control for": the run parameter and what a piece computes with it. The
// numbers themselves are the engine's (lib/spatial/regression, checked against
// its own references); here the product is checked against the engine on the
// same inputs: which regions, which weights, which messages.

const geometry: RunGeometry = { baseWeights: rookLattice(6) };
const params: PeriodParams = {
  weights: "rook",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 99,
  seed: 3,
  alpha: 0.05,
  correction: "fdr",
  local: false,
};
const ids = geometry.baseWeights.ids;
const byId = (f: (i: number) => number | null) => new Map(ids.map((id, i) => [id, f(i)]));
// West–east industry gradient with a deterministic wobble; unemployment follows it plus its own pattern.
const industry = byId((i) => (i % 6) * 2 + ((i * 37) % 11) / 10);
const other = byId((i) => Math.floor(i / 6) + ((i * 53) % 7) / 10);
const unemployment = byId((i) => 3 + 0.8 * ((i % 6) * 2) + ((i * 29) % 13) / 5);

describe("the controlFor parameter", () => {
  it("is optional, at most MAX_CONTROL_FOR codes, each once, and absent from runs stored before it", () => {
    expect(runParamsInputSchema.parse({}).controlFor).toBeUndefined();
    expect(runParamsInputSchema.parse({ controlFor: ["heavy_industry_share"] }).controlFor).toEqual(["heavy_industry_share"]);
    const many = runParamsInputSchema.safeParse({ controlFor: Array.from({ length: MAX_CONTROL_FOR + 1 }, (_, i) => `c${i}`) });
    expect(many.error?.issues[0]).toMatchObject({ path: ["controlFor"], message: `Control for at most ${MAX_CONTROL_FOR} indicators.` });
    const twice = runParamsInputSchema.safeParse({ controlFor: ["a", "b", "a"] });
    expect(twice.error?.issues[0]).toMatchObject({ path: ["controlFor", 2], message: 'controlFor names indicator "a" twice.' });
    expect(runParamsInputSchema.safeParse({ controlFor: "a" }).error?.issues[0].message).toBe("controlFor must be a list of indicator codes.");
    const stored = {
      weights: "queen",
      transform: "row-standardised",
      islandPolicy: "exclude",
      permutations: 999,
      seed: 7,
      alpha: 0.05,
      correction: "fdr",
      indicators: ["unemployment_rate"],
      periods: ["2020"],
      local: false,
      panelVersionId: 1,
      boundaryVersionId: 1,
      method: "tessera-runs/2",
    };
    expect(resolvedRunParamsSchema.parse(stored).controlFor).toBeUndefined();
    expect(resolvedRunParamsSchema.parse({ ...stored, controlFor: ["heavy_industry_share"] }).controlFor).toEqual(["heavy_industry_share"]);
    expect(resolvedRunParamsSchema.safeParse({ ...stored, controlFor: [] }).success).toBe(false);
  });

  it("is named in the run's label, so two runs that differ only in covariates never share one", () => {
    const run = { number: 4, panelName: "Veldmark", panelVersion: 2, params: { weights: "queen", transform: "row-standardised", permutations: 999 } };
    expect(runLabel(run)).not.toContain("controls for");
    expect(runLabel({ ...run, params: { ...run.params, controlFor: ["heavy_industry_share", "port_access"] } })).toBe(
      `Run 4 · Veldmark v2 · queen, row-standardised · 999 perm. · ${controlForLabel(["heavy_industry_share", "port_access"])}`,
    );
  });

  it("filters the catalogue by suggestion and names the allowed words when one is wrong", () => {
    expect(catalogueQuerySchema.parse({ suggestion: "error,lag" }).suggestion).toEqual(["error", "lag"]);
    expect(catalogueQuerySchema.safeParse({ suggestion: "spatial" }).error?.issues[0].message).toBe("suggestion must be error, lag, both or neither.");
  });
});

describe("computeRegression", () => {
  it("equals the engine on the regions with every value, on the weights restricted to them, and counts those left out", () => {
    const gappy = new Map(industry);
    gappy.set("r7", null);
    gappy.set("r20", Number.NaN);
    const stored = computeRegression(geometry, params, "2020", unemployment, [
      { code: "heavy_industry_share", values: gappy },
      { code: "port_access", values: other },
    ]);
    // Independently: regions where the indicator and both covariates have a value.
    const keep = new Map(ids.map((id) => [id, Number.isFinite(gappy.get(id) as number) ? (unemployment.get(id) as number) : null]));
    const prepared = prepareAnalysis(geometry.baseWeights, keep, { islandPolicy: "exclude", transform: "row-standardised" });
    expect(prepared.report.restricted).toBe(true);
    const expected = regressionDiagnostics(
      prepared.values,
      [
        { name: "heavy_industry_share", values: prepared.ids.map((id) => gappy.get(id) as number) },
        { name: "port_access", values: prepared.ids.map((id) => other.get(id) as number) },
      ],
      prepared.weights,
      { alpha: params.alpha },
    );
    expect(stored).toMatchObject({ covariates: ["heavy_industry_share", "port_access"], n: 34, excluded: 2, message: null, suggestion: expected.suggestion });
    expect(stored.coefficients?.map((c) => [c.name, c.estimate, c.standardError, c.t, c.p])).toEqual(
      expected.fit.coefficients.map((c) => [c.name, c.estimate, c.standardError, c.t, c.p]),
    );
    expect([stored.rSquared, stored.adjustedRSquared]).toEqual([expected.fit.rSquared, expected.fit.adjustedRSquared]);
    expect(stored.moran).toEqual({ ...expected.moran });
    expect(stored.lagrange).toEqual(expected.lagrange);
  });

  it("records a singular design as the period's message naming the covariates, and does not throw", () => {
    const twice = byId((i) => 2 * (industry.get(ids[i]) as number) + 1);
    const collinear = computeRegression(geometry, params, "2021", unemployment, [
      { code: "heavy_industry_share", values: industry },
      { code: "industry_again", values: twice },
    ]);
    expect(collinear).toMatchObject({ n: 36, coefficients: null, moran: null, lagrange: null, suggestion: null });
    expect(collinear.message).toContain("Not fitted in 2021");
    expect(collinear.message).toContain('"industry_again"');
    const constant = computeRegression(geometry, params, "2021", unemployment, [{ code: "flat", values: byId(() => 4) }]);
    expect(constant.message).toContain('"flat"');
  });

  it("records too few regions for the covariates as the period's message", () => {
    // Only four regions have every value: an intercept and two covariates need at least five.
    const sparse = byId((i) => (i < 4 ? (industry.get(ids[i]) as number) : null));
    const few = computeRegression(geometry, params, "2022", unemployment, [
      { code: "heavy_industry_share", values: sparse },
      { code: "port_access", values: other },
    ]);
    expect(few).toMatchObject({ n: 4, excluded: 32, coefficients: null });
    expect(few.message).toContain("4 regions");
    expect(few.message).toContain("at least 5");
  });
});

describe("computePeriod with covariates", () => {
  it("adds the regression beside the unchanged statistics, and a run without covariates stores exactly what it did before", () => {
    const plain = computePeriod(geometry, params, "unemployment_rate", "2020", unemployment);
    expect("regression" in plain).toBe(false);
    const withCovariates = computePeriod(geometry, params, "unemployment_rate", "2020", unemployment, { covariates: [{ code: "heavy_industry_share", values: industry }] });
    const { regression, ...rest } = withCovariates;
    expect(rest).toEqual(plain);
    expect(regression).toEqual(computeRegression(geometry, params, "2020", unemployment, [{ code: "heavy_industry_share", values: industry }]));
    // The covariate explains the west–east gradient: less clustering is left in the residuals.
    expect(regression?.moran?.I).toBeLessThan(plain.moran?.I as number);
  });
});
