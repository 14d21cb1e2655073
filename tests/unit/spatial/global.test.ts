import fc from "fast-check";
import {
  bivariateMoran,
  createRandomSource,
  gearyC,
  generalG,
  globalMoran,
  latticeWeights,
  moranScatterPlot,
  rowStandardisedWeights,
  weightsFromNeighbourLists,
  type SpatialWeights,
} from "@/lib/spatial";
import { allPermutations, exactMoments, inventedValues } from "./helpers";

// A small irregular, asymmetric graph (invented) for exact enumeration: 6! = 720 arrangements.
const smallIds = ["a", "b", "c", "d", "e", "f"];
const smallBinary = weightsFromNeighbourLists(smallIds, [[1, 2], [0, 2, 3], [0, 1, 4], [1, 5], [1, 2, 5], [3]], { rule: "test" });
const smallW = rowStandardisedWeights(smallBinary);
const smallValues = [1.2, 3.5, 0.4, 2.2, 5.1, 0.9];

/** Reorders regions: new region q is old region order[q]; weights relabelled consistently. */
function reorder(weights: SpatialWeights, values: number[], order: number[]): { weights: SpatialWeights; values: number[] } {
  const position = new Array<number>(order.length);
  order.forEach((old, q) => (position[old] = q));
  const lists = order.map((old) => {
    const row: number[] = [];
    for (let p = weights.offsets[old]; p < weights.offsets[old + 1]; p++) row.push(position[weights.neighbours[p]]);
    return row;
  });
  const weightLists = order.map((old) => Array.from(weights.weights.subarray(weights.offsets[old], weights.offsets[old + 1])));
  return {
    weights: weightsFromNeighbourLists(order.map((old) => weights.ids[old]), lists, { rule: weights.rule, weightLists, transform: weights.transform }),
    values: order.map((old) => values[old]),
  };
}

describe("global Moran's I", () => {
  test("checkerboard on a 4×4 rook lattice with binary weights gives I = −1 (derived by hand from the definition)", () => {
    // z = ±1 with mean 0; every link joins opposite colours: ΣΣ w z z = −S0, Σz² = n ⇒ I = −1.
    const values = Array.from({ length: 16 }, (_, i) => ((Math.floor(i / 4) + (i % 4)) % 2 === 0 ? 1 : 0));
    const result = globalMoran(values, latticeWeights(4, 4, "rook"));
    expect(result.I).toBeCloseTo(-1, 14);
    expect(result.expectedI).toBeCloseTo(-1 / 15, 15);
  });

  test("randomisation moments equal the exact moments over all 720 arrangements (Cliff & Ord's randomisation null)", () => {
    const all = allPermutations(smallValues).map((p) => globalMoran(p, smallW).I);
    const exact = exactMoments(all);
    const result = globalMoran(smallValues, smallW);
    expect(exact.mean).toBeCloseTo(result.expectedI, 12);
    expect(exact.variance).toBeCloseTo(result.randomisation.variance, 12);
  });

  test("normality variance matches a seeded Monte Carlo with normal values (20,000 draws, within 4 %)", () => {
    const random = createRandomSource(99);
    const normal = (): number => Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
    const draws: number[] = [];
    for (let r = 0; r < 20000; r++) draws.push(globalMoran(smallValues.map(() => normal()), smallW).I);
    const simulated = exactMoments(draws);
    const analytical = globalMoran(smallValues, smallW);
    expect(Math.abs(simulated.mean - analytical.expectedI)).toBeLessThan(0.01);
    expect(Math.abs(simulated.variance / analytical.normality.variance - 1)).toBeLessThan(0.04);
  });

  test("z and p are consistent: p two-sided = 2·min(greater, less); greater + less = 1", () => {
    const r = globalMoran(inventedValues(25), rowStandardisedWeights(latticeWeights(5, 5, "queen")));
    for (const inference of [r.normality, r.randomisation]) {
      expect(inference.z).toBeCloseTo((r.I - r.expectedI) / Math.sqrt(inference.variance), 12);
      expect(inference.pGreater + inference.pLess).toBeCloseTo(1, 12);
      expect(inference.pTwoSided).toBeCloseTo(2 * Math.min(inference.pGreater, inference.pLess), 12);
    }
  });

  test("I is invariant under affine transforms a·x + b (a ≠ 0) of the values (property)", () => {
    const w = rowStandardisedWeights(latticeWeights(4, 5, "queen"));
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -100, max: 100, noNaN: true }), { minLength: 20, maxLength: 20 }),
        fc.double({ min: 0.01, max: 50, noNaN: true }),
        fc.boolean(),
        fc.double({ min: -1000, max: 1000, noNaN: true }),
        (values, scale, negate, shift) => {
          const spread = Math.max(...values) - Math.min(...values);
          fc.pre(spread > 1e-3);
          const a = negate ? -scale : scale;
          const I = globalMoran(values, w).I;
          const transformed = globalMoran(values.map((v) => a * v + shift), w).I;
          expect(transformed).toBeCloseTo(I, 8);
        },
      ),
      { numRuns: 60 },
    );
  });

  test("I is invariant under reordering of the regions (property)", () => {
    fc.assert(
      fc.property(fc.shuffledSubarray([0, 1, 2, 3, 4, 5], { minLength: 6, maxLength: 6 }), (order) => {
        const moved = reorder(smallW, smallValues, order);
        expect(globalMoran(moved.values, moved.weights).I).toBeCloseTo(globalMoran(smallValues, smallW).I, 12);
        expect(gearyC(moved.values, moved.weights).C).toBeCloseTo(gearyC(smallValues, smallW).C, 12);
      }),
      { numRuns: 50 },
    );
  });

  test("permutation inference: seeded reproducibility, p in [1/(R+1), 1], mean of permuted I near E[I]", () => {
    const w = rowStandardisedWeights(latticeWeights(6, 6, "rook"));
    const values = inventedValues(36);
    const a = globalMoran(values, w, { permutations: 999, random: createRandomSource(42) });
    const b = globalMoran(values, w, { permutations: 999, random: createRandomSource(42) });
    const c = globalMoran(values, w, { permutations: 999, random: createRandomSource(43) });
    expect(b.permutation).toEqual(a.permutation);
    expect(c.permutation?.mean).not.toBe(a.permutation?.mean);
    const perm = a.permutation!;
    for (const p of [perm.pGreater, perm.pLess, perm.pTwoSided]) {
      expect(p).toBeGreaterThanOrEqual(1 / 1000);
      expect(p).toBeLessThanOrEqual(1);
    }
    expect(perm.pGreater).toBeCloseTo((perm.countAtLeast + 1) / 1000, 15);
    expect(perm.pTwoSided).toBeCloseTo(Math.min(1, 2 * Math.min(perm.pGreater, perm.pLess)), 15);
    // 999 draws: the mean is within 4 standard errors of E[I]
    expect(Math.abs(perm.mean - a.expectedI)).toBeLessThan((4 * perm.sd) / Math.sqrt(999));
    // the permutation sd approximates the randomisation sd
    expect(perm.sd / Math.sqrt(a.randomisation.variance)).toBeGreaterThan(0.9);
    expect(perm.sd / Math.sqrt(a.randomisation.variance)).toBeLessThan(1.1);
  });

  test("pseudo p stays in (0, 1] and ≥ 1/(R+1) for any data and R (property)", () => {
    const w = rowStandardisedWeights(latticeWeights(3, 4, "queen"));
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -5, max: 5 }), { minLength: 12, maxLength: 12 }),
        fc.integer({ min: 99, max: 300 }),
        fc.integer(),
        (values, R, seed) => {
          fc.pre(new Set(values).size > 1);
          const perm = globalMoran(values, w, { permutations: R, random: createRandomSource(seed) }).permutation!;
          for (const p of [perm.pGreater, perm.pLess, perm.pTwoSided]) {
            expect(p).toBeGreaterThanOrEqual(1 / (R + 1));
            expect(p).toBeLessThanOrEqual(1);
          }
          expect(perm.pGreater + perm.pLess).toBeGreaterThanOrEqual(1); // ties count in both tails
        },
      ),
      { numRuns: 40 },
    );
  });

  test("the mean of I over 99,999 seeded permutations is E[I] = −1/(n−1) within 4 standard errors of the mean", () => {
    const result = globalMoran(smallValues, smallW, { permutations: 99999, random: createRandomSource(5) });
    const perm = result.permutation!;
    expect(result.expectedI).toBeCloseTo(-0.2, 15);
    expect(Math.abs(perm.mean - result.expectedI)).toBeLessThan((4 * perm.sd) / Math.sqrt(99999));
  });

  test("inputs that must throw", () => {
    const w = latticeWeights(2, 3, "rook");
    expect(() => globalMoran([1, 1, 1, 1, 1, 1], w)).toThrow(/constant/);
    expect(() => globalMoran([1, 2, 3], latticeWeights(1, 3, "rook"))).toThrow(/at least 4 regions/);
    expect(() => globalMoran([1, 2, 3], w)).toThrow(/Expected 6 values/);
    expect(() => globalMoran([1, 2, NaN, 4, 5, 6], w)).toThrow(/not a finite number/);
    expect(() => globalMoran([1, 2, 3, 4, 5, 6], w, { permutations: 50, random: createRandomSource(1) })).toThrow(/99 to 99,999/);
    expect(() => globalMoran([1, 2, 3, 4, 5, 6], w, { permutations: 100000, random: createRandomSource(1) })).toThrow(/99 to 99,999/);
    expect(() => globalMoran([1, 2, 3, 4, 5, 6], w, { permutations: 99 })).toThrow(/seeded random source/);
    const noLinks = weightsFromNeighbourLists(["a", "b", "c", "d"], [[], [], [], []], { rule: "t" });
    expect(() => globalMoran([1, 2, 3, 4], noLinks)).toThrow(/S0 = 0/);
  });
});

describe("Geary's C and General G", () => {
  test("checkerboard on a 4×4 rook lattice: C = 2(n−1)/n = 1.875 (derived by hand)", () => {
    // (z_i − z_j)² = 1 on every link for 0/1 values; Σz² = n/4 ⇒ C = (n−1)·S0 / (2·S0·n/4) = 2(n−1)/n
    const values = Array.from({ length: 16 }, (_, i) => ((Math.floor(i / 4) + (i % 4)) % 2 === 0 ? 1 : 0));
    expect(gearyC(values, latticeWeights(4, 4, "rook")).C).toBeCloseTo(1.875, 14);
  });

  test("Geary randomisation moments equal the exact moments over all 720 arrangements", () => {
    const exact = exactMoments(allPermutations(smallValues).map((p) => gearyC(p, smallW).C));
    const result = gearyC(smallValues, smallW);
    expect(exact.mean).toBeCloseTo(1, 12);
    expect(exact.variance).toBeCloseTo(result.randomisation.variance, 12);
  });

  test("General G randomisation moments (Getis & Ord 1992) equal the exact moments over all 720 arrangements", () => {
    const exact = exactMoments(allPermutations(smallValues).map((p) => generalG(p, smallBinary).G));
    const result = generalG(smallValues, smallBinary);
    expect(exact.mean).toBeCloseTo(result.expectedG, 12);
    expect(exact.variance).toBeCloseTo(result.randomisation.variance, 12);
  });

  test("permutation tests are seeded; General G rejects negative values", () => {
    const w = latticeWeights(5, 5, "rook");
    const values = inventedValues(25);
    const a = gearyC(values, w, { permutations: 199, random: createRandomSource(8) });
    expect(gearyC(values, w, { permutations: 199, random: createRandomSource(8) }).permutation).toEqual(a.permutation);
    expect(a.permutation!.pLess).toBeGreaterThanOrEqual(1 / 200);
    const g = generalG(values, w, { permutations: 199, random: createRandomSource(8) });
    expect(generalG(values, w, { permutations: 199, random: createRandomSource(8) }).permutation).toEqual(g.permutation);
    expect(() => generalG(values.map((v, i) => (i === 3 ? -1 : v)), w)).toThrow(/non-negative/);
  });

  test("the mean of General G over 9,999 permutations is E[G] = S0/(n(n−1)) within 4 standard errors of the mean", () => {
    // 5×5 rook lattice, binary: S0 = 80, n = 25 ⇒ E[G] = 80/600. The standard error of the mean of R
    // draws is sd/√R ≈ 6.4e-5 here (0.05 % of E[G]), so an expectation off by 1 %, or S0/n² in place
    // of S0/(n(n−1)) (4 % low), fails by far; a loose constant tolerance such as 0.005 would let both pass.
    const w = latticeWeights(5, 5, "rook");
    const R = 9999;
    const g = generalG(inventedValues(25), w, { permutations: R, random: createRandomSource(8) });
    const standardError = g.permutation!.sd / Math.sqrt(R);
    expect(standardError).toBeLessThan(1e-3 * g.expectedG);
    expect(Math.abs(g.permutation!.mean - g.expectedG)).toBeLessThan(4 * standardError);
  });
});

describe("bivariate Moran and the scatter plot", () => {
  test("bivariate Moran of x with itself is Moran's I; its joint-relabelling mean is −r/(n−1)", () => {
    const w = rowStandardisedWeights(latticeWeights(5, 5, "queen"));
    const x = inventedValues(25);
    const y = inventedValues(25, 2);
    expect(bivariateMoran(x, x, w).I).toBeCloseTo(globalMoran(x, w).I, 12);
    const result = bivariateMoran(x, y, w, { permutations: 9999, random: createRandomSource(3) });
    expect(result.expectedI).toBeCloseTo(-result.inSituCorrelation / 24, 12);
    expect(Math.abs(result.permutation!.mean - result.expectedI)).toBeLessThan((4 * result.permutation!.sd) / Math.sqrt(9999));
  });

  test("scatter-plot slope equals I for row-standardised weights without islands", () => {
    const w = rowStandardisedWeights(latticeWeights(4, 6, "rook"));
    const values = inventedValues(24);
    const plot = moranScatterPlot(values, w);
    expect(plot.slope).toBeCloseTo(globalMoran(values, w).I, 12);
    const meanZ = plot.z.reduce((s, v) => s + v, 0) / 24;
    expect(meanZ).toBeCloseTo(0, 12);
  });
});
