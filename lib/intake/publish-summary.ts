/**
 * What publishing a version makes visible, counted from what validation
 * recorded (no query): for the confirmation that names the counts before
 * economists and subscribers can see them.
 */
import type { PanelReport } from "./report";

export interface PublishCounts {
  regions: number | null;
  indicators: string[];
  periods: string[];
  /** Stored observations, missing values included (null for boundaries). */
  observations: number | null;
  /** Of the observations, how many are missing values. */
  missing: number;
}

export function publishCounts(detail: { kind: "boundaries" | "panel"; count: number | null; report: Record<string, unknown> | null }): PublishCounts {
  if (detail.kind === "boundaries") return { regions: detail.count, indicators: [], periods: [], observations: null, missing: 0 };
  const report = detail.report as Partial<PanelReport> | null;
  const missing = Object.values(report?.missing ?? {}).reduce((sum, n) => sum + n, 0);
  return {
    // Matched regions: with boundaries every stored code is one of them.
    regions: report?.regions ? (report.regions.matched ?? report.regions.inPanel) : null,
    indicators: report?.indicators ?? [],
    periods: report?.periods ?? [],
    observations: report?.observations ?? null,
    missing,
  };
}
