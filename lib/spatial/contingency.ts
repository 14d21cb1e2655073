/**
 * Pearson's chi-square test of independence for a contingency table: is the
 * column (say, a region's cluster class in the later period) independent of
 * the row (its class in the earlier one)? Published formula: X² = Σ (O − E)²/E
 * with E = row total × column total / n and (r − 1)(c − 1) degrees of freedom;
 * checked against R's stats::chisq.test(correct = FALSE)
 * (tests/fixtures/spatial/chisq-independence.json).
 */
import { chiSquareUpperTail } from "./distributions";

export interface IndependenceTest {
  /** Observations in the table. */
  readonly n: number;
  /** Rows and columns kept: those with at least one observation. */
  readonly rows: number;
  readonly columns: number;
  readonly chiSquare: number;
  readonly degreesOfFreedom: number;
  readonly p: number;
  /** Cells whose expected count is below 5: the chi-square approximation is rough when there are many (common practice: at most a fifth of the cells). */
  readonly expectedBelow5: number;
  readonly cells: number;
}

/**
 * The test on `counts` after dropping all-zero rows and columns, or null when
 * fewer than two rows or two columns remain (nothing to test).
 * @example chiSquareIndependence([[12, 5], [3, 9]]); // { chiSquare: 5.8548…, degreesOfFreedom: 1, p: 0.0155… }
 */
export function chiSquareIndependence(counts: readonly (readonly number[])[]): IndependenceTest | null {
  counts.forEach((row, i) =>
    row.forEach((v, j) => {
      if (!Number.isFinite(v) || v < 0) throw new Error(`Contingency table cell [${i}][${j}] must be a count ≥ 0; got ${v}.`);
    }),
  );
  const width = Math.max(0, ...counts.map((r) => r.length));
  const rowTotals = counts.map((r) => r.reduce((a, v) => a + v, 0));
  const columnTotals = Array.from({ length: width }, (_, j) => counts.reduce((a, r) => a + (r[j] ?? 0), 0));
  const keptRows = rowTotals.flatMap((t, i) => (t > 0 ? [i] : []));
  const keptColumns = columnTotals.flatMap((t, j) => (t > 0 ? [j] : []));
  if (keptRows.length < 2 || keptColumns.length < 2) return null;
  const n = keptRows.reduce((a, i) => a + rowTotals[i], 0);
  let chiSquare = 0;
  let expectedBelow5 = 0;
  for (const i of keptRows) {
    for (const j of keptColumns) {
      const expected = (rowTotals[i] * columnTotals[j]) / n;
      const difference = (counts[i][j] ?? 0) - expected;
      chiSquare += (difference * difference) / expected;
      if (expected < 5) expectedBelow5++;
    }
  }
  const degreesOfFreedom = (keptRows.length - 1) * (keptColumns.length - 1);
  return {
    n,
    rows: keptRows.length,
    columns: keptColumns.length,
    chiSquare,
    degreesOfFreedom,
    p: chiSquareUpperTail(chiSquare, degreesOfFreedom),
    expectedBelow5,
    cells: keptRows.length * keptColumns.length,
  };
}
