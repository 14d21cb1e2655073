/**
 * Sequential Monte Carlo p-values for local Moran's I (Besag & Clifford 1991,
 * "Sequential Monte Carlo p-values", Biometrika 78(2), 301–304): a region
 * stops drawing once h permuted values in each tail are as extreme as its own.
 *
 * Checked against the fixed-count conditional permutation test of the same
 * engine on the North Carolina SIDS data and queen neighbour lists written by
 * R's spdep (tests/fixtures/spdep, see scripts/reference/spdep-reference.R):
 * the sequential rule must reproduce the fixed-count result exactly for every
 * region it does not stop, stop only regions whose fixed-count p is far from
 * significance, and estimate their p within the sampling error Besag and
 * Clifford give for h/L.
 */
import { binaryWeights, createRandomSource, localGetisOrd, localMoran, rowStandardisedWeights, weightsFromNeighbourLists } from "@/lib/spatial";
import { indexLists, loadData, loadNeighbours } from "../../fixtures/spdep/fixtures";

const data = loadData();
const neighbours = loadNeighbours();
const ids = neighbours.ids.map(String);
const weights = rowStandardisedWeights(binaryWeights(weightsFromNeighbourLists(ids, indexLists(neighbours.ids, neighbours.queen.neighbours), { rule: "queen" })));
const R = 9999;
const H = 20;

function run(sequentialExtremes: number | null, seed = 11) {
  return localMoran(data.variables.sid79.x, weights, {
    permutations: R,
    random: createRandomSource(seed),
    correction: "none",
    alpha: 0.05,
    sequentialExtremes,
  });
}

const fixed = run(null);
const sequential = run(H);

describe("sequential Monte Carlo p-values (Besag & Clifford 1991) against the fixed-count test on the NC SIDS data", () => {
  test("a fixed-count run reports every region using all R permutations", () => {
    expect(fixed.sequentialExtremes).toBeNull();
    for (const region of fixed.regions) if (region.neighbours > 0) expect(region.permutationsUsed).toBe(R);
  });

  test("regions the rule does not stop get the fixed-count pseudo p-values bit for bit", () => {
    const unstopped = sequential.regions.filter((r) => r.permutationsUsed === R);
    expect(unstopped.length).toBeGreaterThan(0);
    for (const region of unstopped) {
      const reference = fixed.regions.find((r) => r.id === region.id);
      expect(region.pseudoPGreater).toBe(reference?.pseudoPGreater);
      expect(region.pseudoPLess).toBe(reference?.pseudoPLess);
      expect(region.pseudoP).toBe(reference?.pseudoP);
    }
  });

  test("most regions stop early, so most of the permutation work is saved", () => {
    const stopped = sequential.regions.filter((r) => r.permutationsUsed !== null && r.permutationsUsed < R);
    const used = sequential.regions.reduce((sum, r) => sum + (r.permutationsUsed ?? 0), 0);
    expect(stopped.length).toBeGreaterThan(sequential.regions.length / 2);
    expect(used).toBeLessThan(0.5 * R * sequential.regions.length);
  });

  test("a stopped region's folded p is 2h/L, never below 2h/R, and the fixed-count run (same draws) has at least h extremes in each tail too", () => {
    for (const region of sequential.regions.filter((r) => r.permutationsUsed !== null && r.permutationsUsed < R)) {
      const used = region.permutationsUsed as number;
      const p = region.pseudoP as number;
      expect(p).toBeCloseTo(Math.min(1, (2 * H) / used), 12);
      expect(p).toBeGreaterThanOrEqual((2 * H) / R);
      // The fixed-count run starts with the same L draws, so its smaller tail holds ≥ h of them.
      const reference = fixed.regions.find((r) => r.id === region.id)?.pseudoP as number;
      expect(reference).toBeGreaterThanOrEqual((2 * (H + 1)) / (R + 1) - 1e-12);
    }
  });

  test("a stopped region's p estimates the fixed-count p within Besag and Clifford's sampling error", () => {
    // h/L after a negative-binomial stop has relative sd about 1/sqrt(h); the
    // fixed-count p (R = 9,999) is far more precise, so it stands in for the truth.
    // Five relative sd (plus 0.01 for capped folded values near 1) bounds every region.
    const tolerance = 5 / Math.sqrt(H);
    for (const region of sequential.regions.filter((r) => r.permutationsUsed !== null && r.permutationsUsed < R)) {
      const reference = fixed.regions.find((r) => r.id === region.id)?.pseudoP as number;
      const estimate = region.pseudoP as number;
      expect(Math.abs(estimate - reference)).toBeLessThanOrEqual(tolerance * reference + 0.01);
    }
  });

  test("the regions significant at 5 % (uncorrected) are the same as with the fixed count, up to Monte Carlo noise at the boundary", () => {
    const significant = (result: typeof fixed) => new Set(result.regions.filter((r) => r.cluster !== "not-significant" && r.cluster !== "no-neighbours").map((r) => r.id));
    const a = significant(fixed);
    const b = significant(sequential);
    expect(a.size).toBeGreaterThan(3);
    const differ = [...a].filter((id) => !b.has(id)).concat([...b].filter((id) => !a.has(id)));
    for (const id of differ) {
      const reference = fixed.regions.find((r) => r.id === id)?.pseudoP as number;
      expect(Math.abs(reference - 0.05)).toBeLessThan(0.02);
    }
  });

  test("refuses h outside 1 … R and a fractional h", () => {
    expect(() => run(0)).toThrow(/whole number of extremes/);
    expect(() => run(2.5)).toThrow(/whole number of extremes/);
    expect(() => run(R + 1)).toThrow(/whole number of extremes/);
  });

  test("under the null, the sequential p is valid: P(p ≤ 0.1) stays near 0.1 over many shuffled maps", () => {
    // Validity of the sequential p is Besag and Clifford's main result; here
    // the values are shuffled at random, so every region is null by construction.
    const values = [...data.variables.sid79.x];
    const shuffle = createRandomSource(99);
    let rejections = 0;
    let tests = 0;
    for (let map = 0; map < 40; map++) {
      for (let i = values.length - 1; i > 0; i--) {
        const j = shuffle.nextInt(i + 1);
        [values[i], values[j]] = [values[j], values[i]];
      }
      const result = localMoran(values, weights, { permutations: 199, random: createRandomSource(map + 1), correction: "none", sequentialExtremes: 10 });
      for (const region of result.regions) {
        if (region.pseudoP === null) continue;
        tests++;
        if (region.pseudoP <= 0.1) rejections++;
      }
    }
    // 40 maps × 100 regions; regions of one map are dependent, so allow a wide band.
    expect(rejections / tests).toBeGreaterThan(0.06);
    expect(rejections / tests).toBeLessThan(0.14);
  });
});

describe("sequential p-values of local Gi* (runs store Gi* with the local Moran draws)", () => {
  const gi = (sequentialExtremes: number | null) =>
    localGetisOrd(data.variables.sid79.x, weights, { star: true, permutations: R, random: createRandomSource(11), sequentialExtremes });
  const giFixed = gi(null);
  const giSequential = gi(H);

  test("a fixed-count Gi* uses all R permutations; unstopped regions of the sequential one get the fixed-count p bit for bit", () => {
    for (const region of giFixed.regions) if (region.neighbours > 0) expect(region.permutationsUsed).toBe(R);
    const unstopped = giSequential.regions.filter((r) => r.permutationsUsed === R);
    expect(unstopped.length).toBeGreaterThan(0);
    for (const region of unstopped) expect(region.pseudoP).toBe(giFixed.regions.find((r) => r.id === region.id)?.pseudoP);
  });

  test("a stopped region's folded p is 2h/L and the fixed-count run has at least h extremes in each tail", () => {
    const stopped = giSequential.regions.filter((r) => r.permutationsUsed !== null && r.permutationsUsed < R);
    expect(stopped.length).toBeGreaterThan(giSequential.regions.length / 2);
    for (const region of stopped) {
      expect(region.pseudoP as number).toBeCloseTo(Math.min(1, (2 * H) / (region.permutationsUsed as number)), 12);
      expect(giFixed.regions.find((r) => r.id === region.id)?.pseudoP as number).toBeGreaterThanOrEqual((2 * (H + 1)) / (R + 1) - 1e-12);
    }
  });

  test("with the same draws, Gi*'s conditional permutation p equals local Moran's: both rank the neighbours' weighted sum, with region i fixed", () => {
    // Local Moran's I_i = (z_i/m2)·Σ w_ij z_j and Gi*'s z_i both move monotonically with
    // Σ_j w_ij x_j when x_i stays put, so the folded two-sided counts agree (Anselin 1995, §4;
    // Ord & Getis 1995). Regions exactly at the mean (z_i = 0) are the exception: their I_i is 0 whatever the draw.
    for (const [moran, getis] of [
      [fixed, giFixed],
      [sequential, giSequential],
    ] as const) {
      let compared = 0;
      moran.regions.forEach((region, i) => {
        if (region.neighbours === 0 || region.Ii === 0) return;
        compared++;
        expect(getis.regions[i].pseudoP).toBe(region.pseudoP);
        expect(getis.regions[i].permutationsUsed).toBe(region.permutationsUsed);
      });
      expect(compared).toBeGreaterThan(90);
    }
  });

  test("refuses h outside 1 … R", () => {
    expect(() => gi(0)).toThrow(/whole number of extremes/);
    expect(() => gi(R + 1)).toThrow(/whole number of extremes/);
  });
});
