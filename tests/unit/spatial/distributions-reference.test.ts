import reference from "@/tests/fixtures/spatial/distributions.json";
import { chiSquareUpperTail, normalTailProbabilities, normalUpperTail } from "@/lib/spatial";

// Check values from R's stats::qnorm, pnorm, qchisq and pchisq (lower.tail = FALSE),
// computed by scripts/reference/distributions-reference.R and written at full precision;
// the R and jsonlite versions are in the fixture's `versions`.

/** Relative difference. */
function relative(a: number, b: number): number {
  return b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b);
}

describe(`standard normal upper tail against R (${reference.versions.R})`, () => {
  it.each(reference.normal.quantiles.map((q) => [q.upperTail, q.z] as const))("at R's qnorm(%s, lower.tail = FALSE) = %s it is that probability", (p, z) => {
    expect(relative(normalUpperTail(z), p)).toBeLessThan(1e-13);
    // the lower tail at −z, by symmetry
    expect(relative(normalTailProbabilities(-z).pLess, p)).toBeLessThan(1e-13);
  });

  it.each(reference.normal.upperTails.map((q) => [q.z, q.upperTail] as const))("P(Z ≥ %s) = %s (R's pnorm), to a relative 1e-13 however small", (z, p) => {
    expect(relative(normalUpperTail(z), p)).toBeLessThan(1e-13);
  });
});

describe(`chi-square upper tail against R (${reference.versions.R})`, () => {
  it.each(reference.chiSquare.quantiles.map((q) => [q.df, q.upperTail, q.x] as const))("df %s: at R's qchisq(%s, df, lower.tail = FALSE) = %s it is that probability", (df, p, x) => {
    expect(relative(chiSquareUpperTail(x, df), p)).toBeLessThan(1e-13);
  });

  it.each(reference.chiSquare.upperTails.map((q) => [q.x, q.df, q.upperTail] as const))("P(χ² ≥ %s | df %s) = %s (R's pchisq), to a relative 1e-13 however small", (x, df, p) => {
    expect(relative(chiSquareUpperTail(x, df), p)).toBeLessThan(1e-13);
  });
});
