import {
  createRandomSource,
  gearyC,
  generalG,
  globalMoran,
  globalStatistics,
  latticeWeights,
  rowStandardisedWeights,
  withSelfLinks,
} from "@/lib/spatial";
import { inventedValues } from "./helpers";

const rook = rowStandardisedWeights(latticeWeights(8, 9, "rook"));
const positive = inventedValues(72, 0.4);

describe("globalStatistics: Moran's I, Geary's C and General G on one shared permutation test", () => {
  it("Moran's I equals globalMoran with the same seed, field for field (permuted values included in the summary)", () => {
    const shared = globalStatistics(positive, rook, { permutations: 499, random: createRandomSource(21) });
    expect(shared.moran).toEqual(globalMoran(positive, rook, { permutations: 499, random: createRandomSource(21) }));
  });

  it("Geary's C equals gearyC with the same seed: the same relabellings, the same counts", () => {
    const shared = globalStatistics(positive, rook, { permutations: 499, random: createRandomSource(21) });
    const alone = gearyC(positive, rook, { permutations: 499, random: createRandomSource(21) });
    expect(shared.geary).toEqual(alone);
  });

  it("General G equals generalG with the same seed (analytic fields exactly, permutation summary to rounding)", () => {
    const shared = globalStatistics(positive, rook, { permutations: 499, random: createRandomSource(21) });
    const alone = generalG(positive, rook, { permutations: 499, random: createRandomSource(21) });
    expect(shared.generalGProblem).toBeNull();
    const { permutation, ...analytic } = alone;
    expect(shared.generalG).toMatchObject(analytic);
    expect(shared.generalG?.permutation?.countAtLeast).toBe(permutation?.countAtLeast);
    expect(shared.generalG?.permutation?.countAtMost).toBe(permutation?.countAtMost);
    expect(shared.generalG?.permutation?.mean).toBeCloseTo(permutation?.mean ?? NaN, 14);
    expect(shared.generalG?.permutation?.sd).toBeCloseTo(permutation?.sd ?? NaN, 14);
  });

  it("gives General G as null with the reason for negative values, and still computes Moran's I and Geary's C", () => {
    const centred = positive.map((v) => v - 3);
    const shared = globalStatistics(centred, rook, { permutations: 99, random: createRandomSource(2) });
    expect(shared.generalG).toBeNull();
    expect(shared.generalGProblem).toMatch(/^General G needs non-negative values; region "r\d+c\d+" has -/);
    expect(shared.moran.permutation?.permutations).toBe(99);
    expect(shared.geary.permutation?.permutations).toBe(99);
  });

  it("gives General G as null with the reason for weights with self-links", () => {
    const shared = globalStatistics(positive, withSelfLinks(rook), { permutations: 99, random: createRandomSource(2) });
    expect(shared.generalGProblem).toBe("General G excludes i = j: the weights must not contain self-links.");
    expect(shared.moran.I).toBeCloseTo(globalMoran(positive, withSelfLinks(rook)).I, 14);
  });

  it("without permutations it is the three analytic results", () => {
    const shared = globalStatistics(positive, rook);
    expect(shared.moran.permutation).toBeNull();
    expect(shared.geary).toEqual(gearyC(positive, rook));
    expect(shared.generalG).toEqual(generalG(positive, rook));
  });

  it("throws as globalMoran does", () => {
    expect(() => globalStatistics(positive.slice(1), rook)).toThrow(/Expected 72 values/);
    expect(() => globalStatistics(new Array(72).fill(2), rook)).toThrow(/constant/);
    expect(() => globalStatistics(positive, rook, { permutations: 999 })).toThrow(/seeded random source/);
    expect(() => globalStatistics(positive, rook, { permutations: 50, random: createRandomSource(1) })).toThrow(/99 to 99,999/);
  });
});
