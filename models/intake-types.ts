// Types shared by the intake models (migrations/20261201000400-create-intake-tables.js).
// Observations have no model: they are written with COPY and read with plain
// SQL (lib/intake/published-panel.ts).

/** Life of a boundary or panel version. Immutable content; only the state moves forward. */
export const VERSION_STATES = ["uploaded", "validated", "rejected", "published", "archived"] as const;
export type VersionState = (typeof VERSION_STATES)[number];

export const UPLOAD_KINDS = ["boundaries", "panel"] as const;
export type UploadKind = (typeof UPLOAD_KINDS)[number];
export const UPLOAD_STATES = ["pending", "received", "failed"] as const;
export type UploadState = (typeof UPLOAD_STATES)[number];

export type BoundaryFormat = "topojson" | "geojson";
export type PanelLayoutName = "long" | "wide" | "wide-period";
export type DecimalSeparatorName = "." | ",";

/** What a new version changed relative to the previous non-rejected version of the same set or panel. */
export interface VersionDiff {
  /** Version compared against, or null for the first version. */
  previousVersion: number | null;
  previousVersionId: number | null;
  regions: { added: string[]; removed: string[]; addedCount: number; removedCount: number };
  indicators?: { added: string[]; removed: string[] };
  periods?: { added: string[]; removed: string[] };
  /** Values present in both versions (same indicator, period, region) that differ; null-to-number counts as changed. */
  changedValues?: number;
  /** Up to 20 examples of changed values. */
  changedExamples?: { indicator: string; period: string; region: string; before: number | null; after: number | null }[];
}
