import {
  createRandomSource,
  empiricalBayesMoran,
  empiricalBayesStandardise,
  globalMoran,
  localMoran,
  prepareAnalysis,
} from "@/lib/spatial";
import { computePeriod, rateValuesOf, statisticSeed, type PeriodParams, type RateInputs, type RunGeometry } from "@/lib/runs/compute";
import { isEmpiricalBayesRun, runLabel } from "@/lib/runs/label";
import { comparabilityKey } from "@/lib/runs/comparability";
import { resolvedRunParamsSchema, runParamsInputSchema } from "@/lib/runs/schemas";
import { rookLattice } from "./lattice";

// The run option "empirical-Bayes standardised rates": its parameter, its
// computation (global Moran's I on the standardised rates must be the
// engine's empiricalBayesMoran on the same regions and weights, and that
// engine function is checked against spdep's EBImoran.mc in
// tests/unit/spatial/rates-hotspots-reference.test.ts), and its label.

const geometry: RunGeometry = { baseWeights: rookLattice(7, { island: true }) };
const params: PeriodParams = {
  weights: "rook",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 199,
  seed: 4242,
  alpha: 0.05,
  correction: "fdr",
  local: true,
};

/** Invented counts: populations from a few hundred to tens of thousands, events around 4 per 1,000 with a north–south trend. */
function counts(): { events: Map<string, number | null>; population: Map<string, number | null> } {
  const random = createRandomSource(99);
  const events = new Map<string, number | null>();
  const population = new Map<string, number | null>();
  geometry.baseWeights.ids.forEach((id, i) => {
    const p = 200 + Math.floor(random.nextFloat() * 40_000);
    const risk = 0.002 + 0.0008 * Math.floor(i / 7) + 0.001 * random.nextFloat();
    population.set(id, p);
    events.set(id, Math.round(p * risk));
  });
  return { events, population };
}

function rateOf(c: ReturnType<typeof counts>): RateInputs {
  return { events: "closures", population: "residents", eventValues: c.events, populationValues: c.population };
}

/** The rate as published (per 1,000), which an EB run must not analyse directly. */
function publishedRate(c: ReturnType<typeof counts>): Map<string, number | null> {
  return new Map([...c.events].map(([id, o]) => [id, o === null || c.population.get(id) == null ? null : (1000 * o) / (c.population.get(id) as number)]));
}

describe("run parameter rates", () => {
  it("is raw by default and accepts empirical-bayes, nothing else", () => {
    expect(runParamsInputSchema.parse({}).rates).toBe("raw");
    expect(runParamsInputSchema.parse({ rates: "empirical-bayes" }).rates).toBe("empirical-bayes");
    expect(runParamsInputSchema.safeParse({ rates: "smoothed" }).success).toBe(false);
  });

  const stored = {
    weights: "queen",
    transform: "row-standardised",
    islandPolicy: "exclude",
    permutations: 999,
    seed: 1,
    alpha: 0.05,
    correction: "fdr",
    indicators: ["closures_per_1000", "unemployment"],
    periods: ["2019"],
    local: true,
    panelVersionId: 3,
    boundaryVersionId: 2,
    method: "tessera-runs/2",
  };

  it("still reads stored runs from before the option (no empiricalBayes)", () => {
    const parsed = resolvedRunParamsSchema.parse(stored);
    expect(parsed.empiricalBayes).toBeUndefined();
    expect(isEmpiricalBayesRun(parsed)).toBe(false);
  });

  it("stores the standardised rates with their events and population, never an empty list", () => {
    const eb = [{ indicator: "closures_per_1000", events: "closures", population: "working_age", multiplier: 1000 }];
    expect(resolvedRunParamsSchema.parse({ ...stored, empiricalBayes: eb }).empiricalBayes).toEqual(eb);
    expect(resolvedRunParamsSchema.safeParse({ ...stored, empiricalBayes: [] }).success).toBe(false);
  });

  it("marks the label of an EB run and keeps every other label as it was", () => {
    const base = { number: 4, panelName: "Veldmark", panelVersion: 1, params: { weights: "queen", transform: "row-standardised", permutations: 999 } };
    expect(runLabel(base)).toBe("Run 4 · Veldmark v1 · queen, row-standardised · 999 perm.");
    expect(runLabel({ ...base, params: { ...base.params, empiricalBayes: [{ indicator: "closures_per_1000" }] } })).toBe(
      "Run 4 · Veldmark v1 · queen, row-standardised · 999 perm. · EB-standardised",
    );
  });

  it("keeps an EB run and a raw run of the same panel apart when comparing", () => {
    const raw = comparabilityKey({ id: 1, panelId: 1, params: stored });
    const eb = comparabilityKey({ id: 2, panelId: 1, params: { ...stored, empiricalBayes: [{ indicator: "closures_per_1000", events: "c", population: "p" }] } });
    expect(eb.fields).not.toEqual(raw.fields);
  });
});

describe("computePeriod on empirical-Bayes standardised rates", () => {
  it("stores global Moran's I and its permutation test of empiricalBayesMoran on the same regions and weights", () => {
    const c = counts();
    const row = computePeriod(geometry, params, "closures_per_1000", "2019", publishedRate(c), { rate: rateOf(c) });
    expect(row.status).toBe("computed");
    // The island is left out under "exclude", so the analysis has the 49 lattice regions.
    const prepared = prepareAnalysis(geometry.baseWeights, rateValuesOf(geometry.baseWeights.ids, rateOf(c)), { islandPolicy: "exclude", transform: "row-standardised" });
    expect(row.n).toBe(49);
    const events = prepared.ids.map((id) => c.events.get(id) as number);
    const populations = prepared.ids.map((id) => c.population.get(id) as number);
    const engine = empiricalBayesMoran(events, populations, prepared.weights, { permutations: params.permutations, random: createRandomSource(statisticSeed(params.seed, "moran")) });
    expect(row.moran?.I).toBeCloseTo(engine.I, 12);
    expect(row.permutation?.pGreater).toBe(engine.permutation?.pGreater);
    expect(row.permutation?.pTwoSided).toBe(engine.permutation?.pTwoSided);
    // …and not the I of the published rate.
    const onRate = globalMoran(prepared.values.map((v) => v * 1000), prepared.weights).I;
    expect(Math.abs((row.moran?.I ?? 0) - onRate)).toBeGreaterThan(1e-6);
    expect(row.note).toMatch(/^EB-standardised: /);
    expect(row.note).toMatch(/read the permutation p-value/);
  });

  it("computes local Moran on the standardised rates, and no General G", () => {
    const c = counts();
    const row = computePeriod(geometry, params, "closures_per_1000", "2019", publishedRate(c), { rate: rateOf(c) });
    const prepared = prepareAnalysis(geometry.baseWeights, rateValuesOf(geometry.baseWeights.ids, rateOf(c)), { islandPolicy: "exclude", transform: "row-standardised" });
    const z = empiricalBayesStandardise(
      prepared.ids.map((id) => c.events.get(id) as number),
      prepared.ids.map((id) => c.population.get(id) as number),
    ).standardised;
    const local = localMoran(z, prepared.weights, {
      permutations: params.permutations,
      random: createRandomSource(statisticSeed(params.seed, "local")),
      alpha: params.alpha,
      correction: params.correction,
      moments: "conditional",
      pValueSource: "permutation",
    });
    expect(row.local?.Ii).toEqual(local.regions.map((r) => r.Ii));
    expect(row.local?.pseudoP).toEqual(local.regions.map((r) => r.pseudoP));
    expect(row.giStar).not.toBeNull();
    expect(row.generalG).toBeNull();
    expect(row.note).toMatch(/General G was not computed: it needs values of one sign/);
  });

  it("leaves out and counts as missing a region lacking the events or the population", () => {
    const c = counts();
    c.population.set("r3", null);
    c.events.set("r10", null);
    const row = computePeriod(geometry, params, "closures_per_1000", "2019", publishedRate(c), { rate: rateOf(c) });
    expect(row.status).toBe("computed");
    expect(row.n).toBe(47);
    expect(row.exclusions.missing).toBe(2);
    const kept = geometry.baseWeights.ids.filter((id) => id !== "r3" && id !== "r10" && id !== "isle");
    const prepared = prepareAnalysis(geometry.baseWeights, rateValuesOf(geometry.baseWeights.ids, rateOf(c)), { islandPolicy: "exclude", transform: "row-standardised" });
    expect(prepared.ids).toEqual(kept);
    const engine = empiricalBayesMoran(
      kept.map((id) => c.events.get(id) as number),
      kept.map((id) => c.population.get(id) as number),
      prepared.weights,
    );
    expect(row.moran?.I).toBeCloseTo(engine.I, 12);
  });

  it("says why when there are no events at all (every rate 0: constant, nothing to standardise)", () => {
    const c = counts();
    for (const id of c.events.keys()) c.events.set(id, 0);
    const row = computePeriod(geometry, params, "closures_per_1000", "2019", publishedRate(c), { rate: rateOf(c) });
    expect(row.status).toBe("not-computed");
    expect(row.reason).toBe("constant");
    expect(row.note).toMatch(/constant in 2019/);
  });

  it("computes an indicator without rate inputs exactly as before", () => {
    const c = counts();
    const values = publishedRate(c);
    const plain = computePeriod(geometry, params, "closures_per_1000", "2019", values);
    const prepared = prepareAnalysis(geometry.baseWeights, values, { islandPolicy: "exclude", transform: "row-standardised" });
    expect(plain.moran?.I).toBeCloseTo(globalMoran(prepared.values, prepared.weights).I, 12);
    expect(plain.generalG).not.toBeNull();
    expect(plain.note ?? "").not.toMatch(/EB-standardised/);
  });
});
