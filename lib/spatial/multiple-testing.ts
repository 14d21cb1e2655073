/**
 * Corrections for testing many regions (or indicator-periods) at once.
 */

/** `"none"`, `"bonferroni"` (family-wise error) or `"fdr"` (Benjamini–Hochberg false discovery rate). */
export type Correction = "none" | "bonferroni" | "fdr";

/**
 * Adjusted p-values; `null` entries (no test, e.g. an island) stay `null` and
 * do not count among the m tests.
 *
 * - `"none"`: p unchanged.
 * - `"bonferroni"`: min(1, m·p) (C. E. Bonferroni 1936; controls the
 *   family-wise error rate).
 * - `"fdr"`: Benjamini–Hochberg step-up adjusted p,
 *   p̃_(k) = min_{j ≥ k} min(1, m·p_(j)/j) over p sorted ascending
 *   (Y. Benjamini & Y. Hochberg 1995, J. R. Statist. Soc. B 57(1)); rejecting
 *   p̃ ≤ α controls the false discovery rate at α for independent or
 *   positively dependent tests.
 *
 * @throws Error for an unknown correction or a p outside [0, 1].
 * Cost: O(m log m).
 * @example
 *   adjustPValues([0.01, 0.04, 0.03], "fdr"); // [0.03, 0.04, 0.04]
 */
export function adjustPValues(pValues: ArrayLike<number | null>, correction: Correction): (number | null)[] {
  const out: (number | null)[] = [];
  const tested: number[] = [];
  for (let i = 0; i < pValues.length; i++) {
    const p = pValues[i];
    if (p === null || p === undefined || Number.isNaN(p)) {
      out.push(null);
      continue;
    }
    if (!(p >= 0 && p <= 1)) throw new Error(`A p-value must be in [0, 1]; got ${p} at position ${i}.`);
    out.push(p);
    tested.push(i);
  }
  const m = tested.length;
  if (correction === "none") return out;
  if (correction === "bonferroni") {
    for (const i of tested) out[i] = Math.min(1, (out[i] as number) * m);
    return out;
  }
  if (correction !== "fdr") throw new Error(`Correction must be "none", "bonferroni" or "fdr"; got "${String(correction)}".`);
  const order = tested.slice().sort((a, b) => (out[a] as number) - (out[b] as number) || a - b);
  let running = 1;
  for (let rank = m; rank >= 1; rank--) {
    const i = order[rank - 1];
    running = Math.min(running, ((out[i] as number) * m) / rank);
    out[i] = Math.min(1, running);
  }
  return out;
}

/**
 * Which tests are significant at level alpha after a correction: adjusted
 * p ≤ alpha ({@link adjustPValues}); `null` p-values are never significant.
 *
 * @throws Error when alpha is not in (0, 1), or as {@link adjustPValues}.
 * Cost: O(m log m).
 * @example
 *   significantAfterCorrection([0.001, 0.02, 0.2], 0.05, "bonferroni"); // [true, false, false]
 */
export function significantAfterCorrection(pValues: ArrayLike<number | null>, alpha: number, correction: Correction): boolean[] {
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1; got ${String(alpha)}.`);
  return adjustPValues(pValues, correction).map((p) => p !== null && p <= alpha);
}
