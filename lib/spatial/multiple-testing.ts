/**
 * Corrections for testing many regions (or indicator-periods) at once.
 */

/** `"none"`, `"bonferroni"` (family-wise error) or `"fdr"` (Benjamini–Hochberg false discovery rate). */
export type Correction = "none" | "bonferroni" | "fdr";

export function adjustPValues(pValues: ArrayLike<number | null>, correction: Correction): (number | null)[] {
  void pValues;
  void correction;
  throw new Error("not implemented yet");
}

export function significantAfterCorrection(pValues: ArrayLike<number | null>, alpha: number, correction: Correction): boolean[] {
  void pValues;
  void alpha;
  void correction;
  throw new Error("not implemented yet");
}
