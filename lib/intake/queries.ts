/**
 * Reads for the intake screens: boundary sets and panels with their versions,
 * and one version's report and diff. Server-only. These functions do not
 * authorise: a route handler or page calls requireMember first and passes the
 * workspace it resolved. Panel values and indicators are read through
 * ./published-panel, boundary geometry through lib/geometry.
 */
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import type { VersionState } from "@/models/intake-types";
import { indicatorMetadata, type IndicatorMeta } from "./published-panel";
import { harmonisationView, type HarmonisationView } from "./harmonisation";

export interface VersionSummary {
  id: number;
  version: number;
  state: VersionState;
  fileName: string;
  byteSize: number;
  sha256: string;
  createdAt: string;
  createdBy: string | null;
  validatedAt: string | null;
  publishedAt: string | null;
  archivedAt: string | null;
  /** Regions (boundaries) or data rows (panels). */
  count: number | null;
  errorCount: number | null;
  warningCount: number | null;
  /** Short description of the change from the previous version, or null for a first version / not yet validated. */
  diffSummary: string | null;
  /** Panels: the boundary version matched against. */
  boundaryVersion: number | null;
}

export interface BoundarySetView {
  id: number;
  name: string;
  versions: VersionSummary[];
}

export interface PanelView {
  id: number;
  name: string;
  boundarySetId: number;
  boundarySetName: string;
  versions: VersionSummary[];
}

export interface IntakeOverview {
  boundarySets: BoundarySetView[];
  panels: PanelView[];
  indicators: IndicatorMeta[];
}

interface VersionRow {
  id: number;
  parent_id: number;
  version: number;
  state: VersionState;
  file_name: string;
  byte_size: string;
  sha256: string;
  created_at: Date;
  created_by_name: string | null;
  validated_at: Date | null;
  published_at: Date | null;
  archived_at: Date | null;
  count: number | null;
  error_count: number | null;
  warning_count: number | null;
  diff: import("@/models/intake-types").VersionDiff | null;
  boundary_version: number | null;
}

/** One-line description of a diff, e.g. "vs v1: +2 regions, −1 period, 143 values changed". */
export function describeDiff(diff: import("@/models/intake-types").VersionDiff | null): string | null {
  if (!diff || diff.previousVersion === null) return null;
  const parts: string[] = [];
  const count = (n: number, word: string, sign: string) => (n > 0 ? `${sign}${n} ${word}${n === 1 ? "" : "s"}` : null);
  parts.push(count(diff.regions.addedCount, "region", "+") ?? "", count(diff.regions.removedCount, "region", "−") ?? "");
  if (diff.indicators) parts.push(count(diff.indicators.added.length, "indicator", "+") ?? "", count(diff.indicators.removed.length, "indicator", "−") ?? "");
  if (diff.periods) parts.push(count(diff.periods.added.length, "period", "+") ?? "", count(diff.periods.removed.length, "period", "−") ?? "");
  if (diff.changedValues !== undefined) parts.push(diff.changedValues > 0 ? `${diff.changedValues.toLocaleString("en")} value${diff.changedValues === 1 ? "" : "s"} changed` : "");
  const text = parts.filter(Boolean).join(", ");
  return `vs v${diff.previousVersion}: ${text || "no changes"}`;
}

function summary(row: VersionRow): VersionSummary {
  const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
  return {
    id: row.id,
    version: row.version,
    state: row.state,
    fileName: row.file_name,
    byteSize: Number(row.byte_size),
    sha256: row.sha256,
    createdAt: new Date(row.created_at).toISOString(),
    createdBy: row.created_by_name,
    validatedAt: iso(row.validated_at),
    publishedAt: iso(row.published_at),
    archivedAt: iso(row.archived_at),
    count: row.count,
    errorCount: row.error_count,
    warningCount: row.warning_count,
    diffSummary: describeDiff(row.diff),
    boundaryVersion: row.boundary_version,
  };
}

const PUBLISHED_ONLY = "AND v.state = 'published'";

/**
 * Boundary sets and panels of a workspace with their versions, newest first.
 * Without `includeUnpublished` only published versions are listed (and sets or
 * panels without any are left out): economists and subscribers see only those.
 */
export async function intakeOverview(workspaceId: number, includeUnpublished: boolean): Promise<IntakeOverview> {
  const filter = includeUnpublished ? "" : PUBLISHED_ONLY;
  const sets = await db().query<{ id: number; name: string }>("SELECT id, name FROM boundary_sets WHERE workspace_id = :workspaceId ORDER BY name", {
    replacements: { workspaceId },
    type: QueryTypes.SELECT,
  });
  const boundaryRows = await db().query<VersionRow>(
    `SELECT v.id, v.boundary_set_id AS parent_id, v.version, v.state, v.file_name, v.byte_size, v.sha256, v.created_at,
            u.name AS created_by_name, v.validated_at, v.published_at, v.archived_at, v.region_count AS count,
            (v.report->>'errorCount')::int AS error_count, (v.report->>'warningCount')::int AS warning_count, v.diff,
            NULL::int AS boundary_version
       FROM boundary_versions v JOIN boundary_sets s ON s.id = v.boundary_set_id LEFT JOIN users u ON u.id = v.created_by
      WHERE s.workspace_id = :workspaceId ${filter}
      ORDER BY v.version DESC`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  const panels = await db().query<{ id: number; name: string; boundary_set_id: number; boundary_set_name: string }>(
    `SELECT p.id, p.name, p.boundary_set_id, s.name AS boundary_set_name FROM panels p JOIN boundary_sets s ON s.id = p.boundary_set_id
      WHERE p.workspace_id = :workspaceId ORDER BY p.name`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  const panelRows = await db().query<VersionRow>(
    `SELECT v.id, v.panel_id AS parent_id, v.version, v.state, v.file_name, v.byte_size, v.sha256, v.created_at,
            u.name AS created_by_name, v.validated_at, v.published_at, v.archived_at, v.row_count AS count,
            (v.report->>'errorCount')::int AS error_count, (v.report->>'warningCount')::int AS warning_count, v.diff,
            bv.version AS boundary_version
       FROM panel_versions v JOIN panels p ON p.id = v.panel_id LEFT JOIN users u ON u.id = v.created_by
       JOIN boundary_versions bv ON bv.id = v.boundary_version_id
      WHERE p.workspace_id = :workspaceId ${filter}
      ORDER BY v.version DESC`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  const byParent = (rows: VersionRow[]) => {
    const map = new Map<number, VersionSummary[]>();
    for (const row of rows) {
      const list = map.get(row.parent_id) ?? [];
      list.push(summary(row));
      map.set(row.parent_id, list);
    }
    return map;
  };
  const boundaryVersions = byParent(boundaryRows);
  const panelVersions = byParent(panelRows);
  return {
    boundarySets: sets
      .map((s) => ({ id: s.id, name: s.name, versions: boundaryVersions.get(s.id) ?? [] }))
      .filter((s) => includeUnpublished || s.versions.length > 0),
    panels: panels
      .map((p) => ({ id: p.id, name: p.name, boundarySetId: p.boundary_set_id, boundarySetName: p.boundary_set_name, versions: panelVersions.get(p.id) ?? [] }))
      .filter((p) => includeUnpublished || p.versions.length > 0),
    indicators: await indicatorMetadata(workspaceId, includeUnpublished ? "all" : "published"),
  };
}

export interface VersionDetail extends VersionSummary {
  kind: "boundaries" | "panel";
  parentId: number;
  parentName: string;
  report: Record<string, unknown> | null;
  diff: import("@/models/intake-types").VersionDiff | null;
  /** Panels: layout, decimal separator and mapping; boundaries: object and properties. */
  settings: Record<string, unknown>;
  boundaryVersionId: number | null;
  /** Panels made by harmonising another version through a crosswalk (lib/reforms): how, with the names of what it names; null for uploads and boundaries. */
  harmonisation?: HarmonisationView | null;
}

/**
 * One version with its full report and diff, or null when it does not exist in
 * the workspace or (without `includeUnpublished`) is not published.
 */
export async function versionDetail(workspaceId: number, kind: "boundaries" | "panel", versionId: number, includeUnpublished: boolean): Promise<VersionDetail | null> {
  const filter = includeUnpublished ? "" : PUBLISHED_ONLY;
  if (kind === "boundaries") {
    const rows = await db().query<VersionRow & { parent_name: string; report: Record<string, unknown> | null; object_name: string; id_property: string; name_property: string | null; format: string }>(
      `SELECT v.id, v.boundary_set_id AS parent_id, s.name AS parent_name, v.version, v.state, v.file_name, v.byte_size, v.sha256, v.created_at,
              u.name AS created_by_name, v.validated_at, v.published_at, v.archived_at, v.region_count AS count,
              (v.report->>'errorCount')::int AS error_count, (v.report->>'warningCount')::int AS warning_count, v.diff, v.report,
              NULL::int AS boundary_version, v.object_name, v.id_property, v.name_property, v.format
         FROM boundary_versions v JOIN boundary_sets s ON s.id = v.boundary_set_id LEFT JOIN users u ON u.id = v.created_by
        WHERE s.workspace_id = :workspaceId AND v.id = :versionId ${filter}`,
      { replacements: { workspaceId, versionId }, type: QueryTypes.SELECT },
    );
    const row = rows[0];
    if (!row) return null;
    return {
      ...summary(row),
      kind,
      parentId: row.parent_id,
      parentName: row.parent_name,
      report: row.report,
      diff: row.diff,
      settings: { format: row.format, objectName: row.object_name, idProperty: row.id_property, nameProperty: row.name_property },
      boundaryVersionId: null,
    };
  }
  const rows = await db().query<VersionRow & { parent_name: string; report: Record<string, unknown> | null; layout: string; decimal_separator: string; mapping: unknown; boundary_version_id: number; harmonisation: import("@/models/intake-types").HarmonisationProvenance | null }>(
    `SELECT v.id, v.panel_id AS parent_id, p.name AS parent_name, v.version, v.state, v.file_name, v.byte_size, v.sha256, v.created_at,
            u.name AS created_by_name, v.validated_at, v.published_at, v.archived_at, v.row_count AS count,
            (v.report->>'errorCount')::int AS error_count, (v.report->>'warningCount')::int AS warning_count, v.diff, v.report,
            bv.version AS boundary_version, v.layout, v.decimal_separator, v.mapping, v.boundary_version_id, v.harmonisation
       FROM panel_versions v JOIN panels p ON p.id = v.panel_id LEFT JOIN users u ON u.id = v.created_by
       JOIN boundary_versions bv ON bv.id = v.boundary_version_id
      WHERE p.workspace_id = :workspaceId AND v.id = :versionId ${filter}`,
    { replacements: { workspaceId, versionId }, type: QueryTypes.SELECT },
  );
  const row = rows[0];
  if (!row) return null;
  return {
    ...summary(row),
    kind,
    parentId: row.parent_id,
    parentName: row.parent_name,
    report: row.report,
    diff: row.diff,
    settings: { layout: row.layout, decimal: row.decimal_separator, mapping: row.mapping },
    boundaryVersionId: row.boundary_version_id,
    harmonisation: row.harmonisation ? await harmonisationView(workspaceId, row.harmonisation) : null,
  };
}
