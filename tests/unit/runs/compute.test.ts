import { gearyC, generalG, globalMoran, prepareAnalysis, createRandomSource, type RandomSource } from "@/lib/spatial";
import { computeIndicator, computePeriod, statisticSeed, type PeriodParams, type RunGeometry } from "@/lib/runs/compute";
import { rookLattice } from "./lattice";

/**
 * Every random source the run code creates, with what it drew: the partner j
 * of every Fisher–Yates position (the relabellings themselves) and every
 * bounded integer (the local samples). The sources pass every call through to
 * the engine's generator, so the numbers the run computes are unchanged.
 */
const mockDrawLog: { seed: number; draws: number[] }[] = [];
jest.mock("@/lib/spatial", () => {
  const actual: typeof import("@/lib/spatial") = jest.requireActual("@/lib/spatial");
  return {
    ...actual,
    createRandomSource(seed: number): RandomSource {
      const source = actual.createRandomSource(seed);
      const draws: number[] = [];
      mockDrawLog.push({ seed, draws });
      return {
        nextUint32: () => {
          const v = source.nextUint32();
          draws.push(v);
          return v;
        },
        nextInt: (bound: number) => {
          const v = source.nextInt(bound);
          draws.push(v);
          return v;
        },
        nextFloat: () => {
          const v = source.nextFloat();
          draws.push(v);
          return v;
        },
        shuffle: (values: Float64Array, swaps?: Int32Array | null) => {
          const partners = swaps ?? new Int32Array(values.length);
          source.shuffle(values, partners);
          for (let i = values.length - 1; i > 0; i--) draws.push(partners[i]);
        },
      };
    },
  };
});

/** The draws of the sources created while `work` ran, in creation order. */
function drawsDuring(work: () => void): { seed: number; draws: number[] }[] {
  const start = mockDrawLog.length;
  work();
  return mockDrawLog.slice(start);
}

const geometry: RunGeometry = { baseWeights: rookLattice(6, { island: true }) };
const params: PeriodParams = {
  weights: "rook",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 199,
  seed: 7,
  alpha: 0.05,
  correction: "fdr",
  local: true,
};

/** A smooth west–east gradient with a little deterministic noise: clearly clustered. */
function gradient(shift = 0): Map<string, number | null> {
  const values = new Map<string, number | null>();
  for (let i = 0; i < 36; i++) values.set(`r${i}`, (i % 6) + shift + ((i * 7919) % 13) / 20);
  values.set("isle", 3);
  return values;
}

describe("computePeriod", () => {
  it("computes every statistic for a clustered variable and says which islands were left out", () => {
    const row = computePeriod(geometry, params, "x", "2020", gradient());
    expect(row.status).toBe("computed");
    expect(row.n).toBe(36);
    expect(row.exclusions.islandExcluded).toBe(1);
    expect(row.note).toContain('1 region has no neighbour with a value under "rook" weights (isle)');
    expect(row.note).toContain('island policy "exclude"');
    expect(row.moran?.I).toBeGreaterThan(0.5);
    expect(row.moran?.expectedI).toBeCloseTo(-1 / 35, 12);
    expect(row.permutation?.pTwoSided).toBeGreaterThanOrEqual(1 / 200);
    expect(row.permutation?.bandLow).toBeLessThan(row.permutation?.bandHigh ?? -Infinity);
    expect(row.geary?.C).toBeLessThan(1);
    // High values sit next to high values: G above its expectation, at the smallest two-sided pseudo p of 199 permutations.
    expect(row.generalG?.G).toBeGreaterThan(row.generalG?.expectedG ?? Infinity);
    expect(row.generalG?.pseudoP).toBe(2 / 200);
    expect(row.local?.ids).toHaveLength(36);
    expect(row.local?.quadrant).toContain("HH");
    expect(Object.values(row.local?.counts ?? {}).reduce((a, b) => a + b, 0)).toBe(36);
  });

  it("matches the engine's global Moran's I with the run's seed (the CLI's --seed)", () => {
    const row = computePeriod(geometry, params, "x", "2020", gradient());
    const prepared = prepareAnalysis(geometry.baseWeights, gradient(), { islandPolicy: "exclude", transform: "row-standardised" });
    const direct = globalMoran(prepared.values, prepared.weights, { permutations: 199, random: createRandomSource(7) });
    expect(statisticSeed(7, "moran")).toBe(7);
    expect(row.moran?.I).toBe(direct.I);
    expect(row.permutation?.pTwoSided).toBe(direct.permutation?.pTwoSided);
    expect(row.permutation?.mean).toBe(direct.permutation?.mean);
  });

  it("tests Geary's C and General G on Moran's relabellings: each equals the engine's own test with the run's seed", () => {
    const row = computePeriod(geometry, params, "x", "2020", gradient());
    const prepared = prepareAnalysis(geometry.baseWeights, gradient(), { islandPolicy: "exclude", transform: "row-standardised" });
    const options = () => ({ permutations: 199, random: createRandomSource(7) });
    const geary = gearyC(prepared.values, prepared.weights, options());
    const g = generalG(prepared.values, prepared.weights, options());
    expect(row.geary).toEqual({ C: geary.C, zRandomisation: geary.randomisation.z, pRandomisation: geary.randomisation.pTwoSided, pseudoP: geary.permutation?.pTwoSided });
    expect(row.generalG).toEqual({ G: g.G, expectedG: g.expectedG, z: g.randomisation.z, p: g.randomisation.pTwoSided, pseudoP: g.permutation?.pTwoSided });
  });

  it("explains a constant indicator instead of failing", () => {
    const constant = new Map<string, number | null>([...gradient()].map(([k]) => [k, 4.2]));
    const row = computePeriod(geometry, params, "x", "2019", constant);
    expect(row.status).toBe("not-computed");
    expect(row.reason).toBe("constant");
    expect(row.note).toMatch(/^The indicator is constant in 2019: all 36 regions have the value 4\.2/);
    expect(row.moran).toBeNull();
  });

  it("explains too few regions with a value", () => {
    const sparse = new Map<string, number | null>([
      ["r0", 1],
      ["r1", 2],
      ["r6", 3],
    ]);
    const row = computePeriod(geometry, params, "x", "2010", sparse);
    expect(row.status).toBe("not-computed");
    expect(row.reason).toBe("too-few-regions");
    expect(row.note).toContain("Too few regions: 3 of 37 regions can be used in 2010");
    expect(row.exclusions.missing).toBe(34);
  });

  it("keeps islands with a zero lag under the keep policy and says so", () => {
    const row = computePeriod(geometry, { ...params, islandPolicy: "keep" }, "x", "2020", gradient());
    expect(row.status).toBe("computed");
    expect(row.n).toBe(37);
    expect(row.note).toContain('island policy "keep": kept with a spatial lag of zero');
    expect(row.local?.cluster[row.local.ids.indexOf("isle")]).toBe("no-neighbours");
  });

  it("records regions without a value and the re-standardisation", () => {
    const values = gradient();
    values.set("r3", null);
    values.set("r4", Number.NaN);
    const row = computePeriod(geometry, params, "x", "2020", values);
    expect(row.exclusions.missing).toBe(2);
    expect(row.note).toContain("2 regions without a usable value are left out; the weights are restricted to the 35 regions with a value and re-standardised.");
    expect(row.n).toBe(34);
  });

  it("notes General G's need for non-negative values and still computes the rest", () => {
    const values = gradient(-3);
    const row = computePeriod(geometry, params, "x", "2020", values);
    expect(row.status).toBe("computed");
    expect(row.generalG).toBeNull();
    expect(row.note).toContain("General G was not computed");
    // The rest is computed as for the unshifted values (Moran's I and Geary's C do not change under a shift).
    const unshifted = computePeriod(geometry, params, "x", "2020", gradient());
    expect(row.moran?.I).toBeCloseTo(unshifted.moran?.I ?? NaN, 12);
    expect(row.geary?.C).toBeCloseTo(unshifted.geary?.C ?? NaN, 12);
    expect(row.local?.cluster).toEqual(unshifted.local?.cluster);
  });
});

describe("computeIndicator", () => {
  it("continues past bad periods and computes ΔI between computed neighbours in time", () => {
    const constant = new Map<string, number | null>([...gradient()].map(([k]) => [k, 1]));
    const rows = computeIndicator(geometry, params, "x", [
      { period: "2018", values: gradient() },
      { period: "2019", values: constant },
      { period: "2020", values: gradient(1) },
      { period: "2021", values: gradient(2) },
    ]);
    expect(rows.map((r) => r.status)).toEqual(["computed", "not-computed", "computed", "computed"]);
    expect(rows[0].deltaI).toBeNull();
    expect(rows[1].deltaI).toBeNull();
    expect(rows[2].deltaI).toBeNull(); // previous period not computed
    expect(rows[3].deltaI).toBeCloseTo((rows[3].moran?.I ?? NaN) - (rows[2].moran?.I ?? NaN), 14);
  });

  it("reproduces every number with the same seed", () => {
    const periods = [
      { period: "2020", values: gradient() },
      { period: "2021", values: gradient(0.5) },
    ];
    const first = computeIndicator(geometry, params, "x", periods);
    const second = computeIndicator(geometry, params, "x", periods);
    expect(JSON.stringify(second)).toBe(JSON.stringify(first));
    const other = computeIndicator(geometry, { ...params, seed: 8 }, "x", periods);
    expect(other[0].permutation?.mean).not.toBe(first[0].permutation?.mean);
  });

  it("uses the same draws in every period with the same regions, and other draws when the regions differ", () => {
    // A second period unlike the first (not an affine copy, so no outcome would match by itself).
    const later = new Map<string, number | null>([...gradient()].map(([id, v]) => [id, v === null ? null : ((v * 37) % 11) + 0.5]));
    const run = drawsDuring(() =>
      computeIndicator(geometry, params, "x", [
        { period: "2020", values: gradient() },
        { period: "2021", values: later },
      ]),
    );
    // Per period one source for the global test (the run's seed), one for local Moran and one
    // for local Gi*, seeded like local Moran's so that both local maps use the same relabellings.
    const [moran, local] = [statisticSeed(7, "moran"), statisticSeed(7, "local")];
    expect(run.map((s) => s.seed)).toEqual([moran, local, local, moran, local, local]);
    const [first, second] = [run.slice(0, 3), run.slice(3, 6)];
    expect(first[0].draws).toHaveLength(199 * 35); // 36 regions: the partners of positions 35 … 1 of each of the 199 shuffles
    expect(first[1].draws.length).toBeGreaterThanOrEqual(199 * 4); // k_max = 4 neighbours sampled per permutation
    expect(first[2].draws).toEqual(first[1].draws);
    expect(second[0].draws).toEqual(first[0].draws);
    expect(second[1].draws).toEqual(first[1].draws);
    // Another seed draws otherwise, so the equality above is not a property of any two sources.
    const reseeded = drawsDuring(() => computePeriod(geometry, { ...params, seed: 8 }, "x", "2020", gradient()));
    expect(reseeded[0].draws).not.toEqual(first[0].draws);

    // Not the same regions: with one region missing in 2021, its draws are those of 35 regions.
    const gap = gradient();
    gap.set("r14", null);
    const ragged = drawsDuring(() =>
      computeIndicator(geometry, params, "x", [
        { period: "2020", values: gradient() },
        { period: "2021", values: gap },
      ]),
    );
    expect(ragged[0].draws).toEqual(first[0].draws);
    expect(ragged[3].draws).toHaveLength(199 * 34);
    expect(ragged[3].draws.slice(0, 34)).not.toEqual(first[0].draws.slice(0, 34));
  });
});
