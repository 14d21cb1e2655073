import reference from "@/tests/fixtures/spatial/spatial-markov-panel.json";
import { panelTransitions } from "@/lib/runs/panel-transitions";
import type { RunGeometry } from "@/lib/runs/compute";
import { chiSquareUpperTail, latticeWeights, rowStandardisedWeights, spatialMarkov, spatialMarkovPanel } from "@/lib/spatial";

/** Relative difference, with an absolute floor for values near zero. */
function relative(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
}

/** Periods "p1", "p2", … of values[period][region] over the lattice's ids (null = missing). */
function panelOf(ids: readonly string[], values: readonly (readonly (number | null)[])[]) {
  const periods = values.map((_, t) => `p${t + 1}`);
  const byPeriod = new Map(values.map((column, t) => [periods[t], new Map(ids.map((id, i) => [id, column[i]]))]));
  return { periods, byPeriod };
}

describe("panel transitions: a 1 × 6 line over three periods, counted by hand", () => {
  // Rook neighbours on a line; row-standardised, the lag is the neighbours' mean.
  // Pair p1 → p2 (6 regions): values 1…6, lags 2, 2, 3, 4, 5, 5; medians 3.5 (values) and
  // 3.5 (lags), so classes 0 0 0 1 1 1 and lag classes 0 0 0 1 1 1; p2 = 2 1 4 3 6 5 has
  // classes 0 0 1 0 1 1.
  // Pair p2 → p3: the sixth region has no value in p3, so 5 regions: p2 values 2 1 4 3 6
  // (median 3: classes 0 0 1 0 1, the 3 equal to the cut point in the lower class), lags
  // 1, 3, 2, 5, 3 (median 3: lag classes 0 0 0 1 0), p3 values 1 2 3 5 4 (classes 0 0 0 1 1).
  const geometry: RunGeometry = { baseWeights: latticeWeights(1, 6, "rook") };
  const ids = geometry.baseWeights.ids;
  const { periods, byPeriod } = panelOf(ids, [
    [1, 2, 3, 4, 5, 6],
    [2, 1, 4, 3, 6, 5],
    [1, 2, 3, 5, 4, null],
  ]);
  const result = panelTransitions(geometry, { periods, islandPolicy: "exclude" }, "x", byPeriod, 2);

  it("adds the moves of both pairs, conditioned on the neighbours' class, and says what was dropped", () => {
    expect(result.pairs).toEqual([
      { earlier: "p1", later: "p2", regions: 6, missing: 0, noNeighbours: 0, skipped: null },
      { earlier: "p2", later: "p3", regions: 5, missing: 1, noNeighbours: 0, skipped: null },
    ]);
    expect(result.transitions).toBe(11);
    expect(result.droppedMissing).toBe(1);
    // Neighbours low: p1→p2 regions 1, 2 stay low, region 3 rises; p2→p3 regions 1, 2 stay low, 3 falls, 5 stays high.
    expect(result.conditional[0]).toEqual([
      [4, 1],
      [1, 1],
    ]);
    // Neighbours high: p1→p2 region 4 falls, 5 and 6 stay high; p2→p3 region 4 rises.
    expect(result.conditional[1]).toEqual([
      [0, 1],
      [1, 2],
    ]);
    expect(result.pooled).toEqual([
      [4, 2],
      [2, 3],
    ]);
  });

  it("tests homogeneity on the added tables: Q by hand, df 2, p from the χ² tail", () => {
    // From low: Pearson χ² of [[4, 1], [0, 1]] = 2.4; from high: of [[1, 1], [1, 2]] = 5/36.
    const q = 2.4 + 5 / 36;
    expect(result.test).not.toBeNull();
    expect(relative(result.test?.chiSquare ?? NaN, q)).toBeLessThan(1e-14);
    expect(result.test?.degreesOfFreedom).toBe(2);
    // With 2 degrees of freedom the χ² upper tail is exp(−Q/2) exactly.
    expect(relative(result.test?.p ?? NaN, Math.exp(-q / 2))).toBeLessThan(1e-12);
    // 8 cells, all expecting fewer than 5 moves.
    expect(result.test?.cells).toBe(8);
    expect(result.test?.expectedBelow5).toBe(8);
  });

  it("skips a pair with fewer than 2k regions and says why", () => {
    const few = panelOf(ids, [
      [1, 2, 3, 4, 5, 6],
      [2, 1, 4, 3, 6, 5],
      [1, 2, 3, null, null, null],
    ]);
    const r = panelTransitions(geometry, { periods: few.periods, islandPolicy: "exclude" }, "x", few.byPeriod, 2);
    expect(r.pairs[1].skipped).toMatch(/only 3 regions/);
    expect(r.pairs[1].regions).toBe(0);
    expect(r.transitions).toBe(6);
    expect(r.droppedMissing).toBe(3);
  });
});

describe("panel transitions equal the engine's two-period tables added up", () => {
  it("on a 5 × 5 queen lattice without missing values, pair by pair and for one pair alone", () => {
    const base = latticeWeights(5, 5, "queen");
    const w = rowStandardisedWeights(base);
    // Deterministic values with a spatial trend and a wobble, three periods.
    const values = [0, 1, 2].map((t) => base.ids.map((_, i) => Math.floor(i / 5) + Math.sin(i * 1.7 + t * 2.3) * 1.5 + t * 0.1 * (i % 5)));
    const { periods, byPeriod } = panelOf(base.ids, values);
    const result = panelTransitions({ baseWeights: base }, { periods, islandPolicy: "exclude" }, "x", byPeriod, 3);
    const first = spatialMarkov(values[0], values[1], w, { classes: 3 });
    const second = spatialMarkov(values[1], values[2], w, { classes: 3 });
    const added = first.conditional.map((table, l) => table.counts.map((row, i) => row.map((v, j) => v + second.conditional[l].counts[i][j])));
    expect(result.conditional).toEqual(added);
    expect(result.transitions).toBe(50);

    const single = panelTransitions({ baseWeights: base }, { periods: periods.slice(0, 2), islandPolicy: "exclude" }, "x", byPeriod, 3);
    expect(single.conditional).toEqual(first.conditional.map((t) => t.counts));
    expect(single.test?.chiSquare).toBe(first.chiSquare);
    expect(single.test?.degreesOfFreedom).toBe(first.degreesOfFreedom);
  });

  it("the engine refuses no pairs and names the pair with too few regions", () => {
    const w = rowStandardisedWeights(latticeWeights(1, 4, "rook"));
    expect(() => spatialMarkovPanel([], { classes: 2 })).toThrow(/at least one pair/);
    expect(() => spatialMarkovPanel([{ earlier: [1, 2, 3, 4], later: [1, 2, 3, 4], weights: w }], { classes: 3 })).toThrow(/pair 1 of 1.*at least 6 regions/);
  });
});

// Reference: R with spdep (versions in the fixture's `versions`), computed by
// scripts/reference/spatial-markov-panel-reference.R from the same values: each pair's
// regions restricted with spdep's subset.nb, regions left without neighbours dropped
// (card() == 0), lag by lag.listw on nb2listw(style = "W"), classes per period by type-7
// quantiles and findInterval, the tables added over pairs with table(), and Q as the
// sum over earlier classes of stats::chisq.test(correct = FALSE) with p from pchisq and
// the expected counts from chisq.test's $expected.
describe(`panel transitions against R (spdep ${reference.versions.spdep}, ${reference.versions.R})`, () => {
  it.each(reference.cases.map((c) => [c.name, c] as const))("%s: the same pairs, tables, Q, df, p and small expected counts", (_name, c) => {
    const base = latticeWeights(c.rows, c.columns, c.contiguity as "queen" | "rook");
    const values = c.values.map((column, t) => column.map((v, i) => ((c.missing[t] as number[]).includes(i) ? null : v)));
    const { periods, byPeriod } = panelOf(base.ids, values);
    const result = panelTransitions({ baseWeights: base }, { periods, islandPolicy: "exclude" }, "x", byPeriod, c.classes);
    expect(result.pairs.map((p) => ({ regions: p.regions, missing: p.missing, noNeighbours: p.noNeighbours }))).toEqual(c.pairs);
    expect(result.pooled).toEqual(c.pooled);
    expect(result.conditional).toEqual(c.conditional);
    expect(result.test?.degreesOfFreedom).toBe(c.degreesOfFreedom);
    expect(relative(result.test?.chiSquare ?? NaN, c.chiSquare)).toBeLessThan(1e-13);
    expect(relative(result.test?.p ?? NaN, c.p)).toBeLessThan(1e-13);
    expect(result.test?.cells).toBe(c.cells);
    expect(result.test?.expectedBelow5).toBe(c.expectedBelow5);
  });

  it("the cases exercise what they are meant to: missing regions, a region left without neighbours, a p that is not tiny", () => {
    const [queen, rook] = reference.cases;
    expect(queen.pairs.every((p) => p.missing > 0)).toBe(true);
    expect(rook.pairs.some((p) => p.noNeighbours > 0)).toBe(true);
    expect(rook.p).toBeGreaterThan(0.05);
    expect(chiSquareUpperTail(queen.chiSquare, queen.degreesOfFreedom)).toBeLessThan(0.05);
  });
});
