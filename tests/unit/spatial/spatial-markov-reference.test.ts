import reference from "@/tests/fixtures/spatial/spatial-markov.json";
import { latticeWeights, rowStandardisedWeights, spatialMarkov } from "@/lib/spatial";

// Reference: R with spdep (versions in the fixture's `versions`), computed by
// scripts/reference/spatial-markov-reference.R from the same values: neighbours by
// spdep's cell2nb, lag by lag.listw, classes by type-7 quantiles and findInterval,
// and the homogeneity statistic as the sum over earlier classes of
// stats::chisq.test(correct = FALSE) on each lag class × later class table, with
// p = pchisq(Q, df, lower.tail = FALSE). The fixture holds every double at full precision.

/** Relative difference, with an absolute floor for values near zero. */
function relative(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
}

describe(`spatial Markov against R (spdep ${reference.versions.spdep}, ${reference.versions.R})`, () => {
  it.each(reference.cases.map((c) => [c.name, c] as const))("%s: the same tables, chi-square, degrees of freedom and p", (_name, c) => {
    const binary = latticeWeights(c.rows, c.columns, c.contiguity as "queen" | "rook");
    // The lattice is spdep's cell2nb, link for link.
    const lists = Array.from({ length: binary.ids.length }, (_, i) => Array.from(binary.neighbours.subarray(binary.offsets[i], binary.offsets[i + 1])).sort((a, b) => a - b));
    expect(lists).toEqual(c.neighbours);

    const result = spatialMarkov(c.earlier, c.later, rowStandardisedWeights(binary), { classes: c.classes });
    expect(result.classes).toBe(c.classes);
    expect(result.pooled.counts).toEqual(c.pooled);
    expect(result.conditional.map((t) => t.counts)).toEqual(c.conditional);
    expect(result.degreesOfFreedom).toBe(c.degreesOfFreedom);
    expect(relative(result.chiSquare, c.chiSquare)).toBeLessThan(1e-13);
    expect(relative(result.p, c.p)).toBeLessThan(1e-13);
  });

  it("the cases exercise what they are meant to: ties at a cut point, empty conditional rows, a test with degrees of freedom in every case", () => {
    const [queen, ties, sparse] = reference.cases;
    expect(queen.degreesOfFreedom).toBeGreaterThan(0);
    // n = 49, k = 3: the cut points are the 17th and 33rd sorted values, and other regions share those values.
    const sorted = [...ties.earlier].sort((a, b) => a - b);
    const cut = sorted[16];
    expect(ties.earlier.filter((v) => v === cut).length).toBeGreaterThan(1);
    ties.earlier.forEach((v, i) => {
      if (v === cut) expect(ties.fromClass[i]).toBe(0);
    });
    // Five classes on 36 regions: fewer degrees of freedom than 5 · (5 − 1)² when every row were occupied.
    expect(sparse.degreesOfFreedom).toBeLessThan(5 * 16);
    expect(sparse.perClass.some((p) => p.lagClasses < sparse.classes)).toBe(true);
  });
});
