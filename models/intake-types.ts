// Types shared by the intake models (migrations/20261201000400-create-intake-tables.js).
// Observations have no model: they are written with COPY and read with plain
// SQL (lib/intake/published-panel.ts).

/** Life of a boundary or panel version. Immutable content; only the state moves forward. */
export const VERSION_STATES = ["uploaded", "validated", "rejected", "published", "archived"] as const;
export type VersionState = (typeof VERSION_STATES)[number];

export const UPLOAD_KINDS = ["boundaries", "panel", "crosswalk"] as const;
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

/** How a harmonised panel version was made (migrations/20261213000200-boundary-reforms.js); lib/reforms writes it. */
export interface HarmonisationProvenance {
  sourcePanelVersionId: number;
  crosswalkId: number;
  fromBoundaryVersionId: number;
  toBoundaryVersionId: number;
  /** Per indicator: extensive (share-weighted sums), intensive (overlap-weighted means), intensive-by (weighted by a denominator indicator) or rate (re-derived from harmonised events and population). */
  methods: Record<string, { kind: "extensive" } | { kind: "intensive" } | { kind: "intensive-by"; denominator: string } | { kind: "rate"; events: string; population: string }>;
  /** Periods whose values were carried across the reform from the source geography (all periods of the source version). */
  carriedPeriods: string[];
  /** The first period observed on the target geography, when known (the reform's effective period); null when every period was carried. */
  firstPeriodOnTarget: string | null;
  /** The version on the target boundaries whose periods were taken as observed there, if any. */
  continuationPanelVersionId?: number;
}
