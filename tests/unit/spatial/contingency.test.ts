import reference from "@/tests/fixtures/spatial/chisq-independence.json";
import { chiSquareIndependence } from "@/lib/spatial/contingency";

// Reference: R's stats::chisq.test(x, correct = FALSE), run by
// scripts/reference/chisq-reference.R (R and jsonlite versions in the fixture's
// `versions`), written at full precision.

/** Relative difference. */
function relative(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

describe("chi-square test of independence", () => {
  it.each(reference.tables.map((t) => [t.name, t] as const))("matches R's chisq.test on the %s table", (_name, table) => {
    const result = chiSquareIndependence(table.counts);
    expect(result).not.toBeNull();
    expect(relative(result!.chiSquare, table.statistic)).toBeLessThan(1e-13);
    expect(result!.degreesOfFreedom).toBe(table.df);
    expect(relative(result!.p, table.p)).toBeLessThan(1e-13);
    expect(result!.expectedBelow5).toBe(table.expected_below_5);
  });

  it("drops all-zero rows and columns before testing (a cluster class nobody was in)", () => {
    const withEmpty = [
      [12, 0, 5],
      [0, 0, 0],
      [3, 0, 9],
    ];
    const reduced = chiSquareIndependence([
      [12, 5],
      [3, 9],
    ]);
    expect(chiSquareIndependence(withEmpty)).toEqual(reduced);
    expect(reduced).toMatchObject({ rows: 2, columns: 2, n: 29, cells: 4 });
  });

  it("has nothing to test when fewer than two classes are occupied on either side", () => {
    expect(chiSquareIndependence([[7, 3]])).toBeNull();
    expect(chiSquareIndependence([[5], [4]])).toBeNull();
    expect(chiSquareIndependence([[0, 0], [0, 0]])).toBeNull();
  });

  it("refuses a cell that is not a count, naming it", () => {
    expect(() => chiSquareIndependence([[1, 2], [3, -1]])).toThrow("cell [1][1] must be a count ≥ 0; got -1");
    expect(() => chiSquareIndependence([[1, Number.NaN], [3, 4]])).toThrow("cell [0][1]");
  });
});
