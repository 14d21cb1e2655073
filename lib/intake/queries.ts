/**
 * Reads of intake data for the rest of Tessera (analyses, maps, the intake
 * screens). Server-only. These functions do not authorise: a route handler or
 * server action calls requireMember first and passes ids that belong to that
 * workspace (use `panelVersionInWorkspace` / `boundaryVersionInWorkspace`).
 *
 * Analyses must only read published versions; `latestPublishedPanelVersion`
 * and `publishedPanelVersions` return only those.
 */
import { to as copyTo } from "pg-copy-streams";
import { QueryTypes } from "sequelize";
import type { Topology } from "topojson-specification";
import { db } from "@/lib/db";
import { regionCentroids, summariseWeights, weightsFromTopology } from "@/lib/spatial";
import { parsePeriod, sortPeriods, type Period } from "./periods";
import { intakePool } from "./ingest-db";
import { readVersionFile } from "./version-files";
import type { VersionState } from "@/models/intake-types";
import { can, type Role } from "@/lib/auth/roles";

export interface PeriodRef {
  key: string;
  label: string;
}

/**
 * A panel version as indicator × period × region values.
 *
 * - `regionCodes`: every region of the boundary version the panel was matched
 *   against, in the boundary file's geometry order (the order of
 *   `loadBoundaryTopology(...).regionCodes`).
 * - `periods`: in time order. `indicators`: sorted by code.
 * - `values.get(indicator).get(periodKey).get(regionCode)` is the value, or
 *   null when the cell was given as missing or the panel has no row for it.
 *   Every (indicator, period, region) of the three lists is present in the maps.
 */
export interface PanelMatrix {
  panelVersionId: number;
  boundaryVersionId: number;
  state: VersionState;
  indicators: string[];
  periods: PeriodRef[];
  regionCodes: string[];
  values: Map<string, Map<string, Map<string, number | null>>>;
}

/**
 * The same data in typed arrays, for large panels (3,000 regions × 30 periods
 * × 50 indicators is 4.5 million values: about 36 MB here, several hundred MB as Maps).
 * `columns.get(indicator)[periodIndex][regionIndex]` is the value, NaN when
 * missing or absent. Indices follow `periods` and `regionCodes`.
 */
export interface PanelColumns {
  panelVersionId: number;
  boundaryVersionId: number;
  state: VersionState;
  indicators: string[];
  periods: PeriodRef[];
  regionCodes: string[];
  columns: Map<string, Float64Array[]>;
}

export interface PanelSelection {
  /** Indicator codes to read; all when absent. Unknown codes are an error. */
  indicators?: readonly string[];
  /** Period keys (e.g. `2019`, `2019-Q3`) to read; all when absent. Unknown keys are an error. */
  periods?: readonly string[];
}

export interface BoundaryTopology {
  boundaryVersionId: number;
  state: VersionState;
  /** The stored TopoJSON (GeoJSON uploads were converted at intake). */
  topology: Topology;
  objectName: string;
  idProperty: string;
  nameProperty: string | null;
  /** Region codes in geometry order. */
  regionCodes: string[];
  /** Region names by code (null when no name property was chosen). */
  regionNames: Map<string, string | null>;
  coordinates: "planar" | "lonlat";
}

interface PanelVersionHead {
  id: number;
  state: VersionState;
  boundary_version_id: number;
}

async function panelVersionHead(panelVersionId: number): Promise<PanelVersionHead> {
  const rows = await db().query<PanelVersionHead>("SELECT id, state, boundary_version_id FROM panel_versions WHERE id = :id", {
    replacements: { id: panelVersionId },
    type: QueryTypes.SELECT,
  });
  const head = rows[0];
  if (!head) throw new Error(`panel version ${panelVersionId} does not exist`);
  return head;
}

/** Region codes of a boundary version in geometry order. */
export async function regionCodesOf(boundaryVersionId: number): Promise<string[]> {
  const rows = await db().query<{ code: string }>("SELECT code FROM regions WHERE boundary_version_id = :id ORDER BY id", {
    replacements: { id: boundaryVersionId },
    type: QueryTypes.SELECT,
  });
  return rows.map((r) => r.code);
}

/**
 * Indicator codes and period keys stored for a panel version (periods in time
 * order). Every run piece asks, so this walks the observations' primary key
 * (panel_version_id, indicator_code, period_key, region_code) as a loose
 * index scan — one index probe per distinct indicator and per distinct
 * indicator × period — instead of a DISTINCT over every observation, which
 * read all 460,000 rows of a 3,600-region panel on each call.
 */
export async function panelDimensions(panelVersionId: number): Promise<{ indicators: string[]; periods: PeriodRef[] }> {
  const rows = await db().query<{ kind: "indicator" | "period"; value: string }>(
    `WITH RECURSIVE indicator AS (
       (SELECT indicator_code AS code FROM observations WHERE panel_version_id = :id ORDER BY indicator_code LIMIT 1)
       UNION ALL
       SELECT (SELECT o.indicator_code FROM observations o
                WHERE o.panel_version_id = :id AND o.indicator_code > indicator.code ORDER BY o.indicator_code LIMIT 1)
         FROM indicator WHERE indicator.code IS NOT NULL
     ), period AS (
       SELECT indicator.code,
              (SELECT o.period_key FROM observations o
                WHERE o.panel_version_id = :id AND o.indicator_code = indicator.code ORDER BY o.period_key LIMIT 1) AS key
         FROM indicator WHERE indicator.code IS NOT NULL
       UNION ALL
       SELECT period.code,
              (SELECT o.period_key FROM observations o
                WHERE o.panel_version_id = :id AND o.indicator_code = period.code AND o.period_key > period.key ORDER BY o.period_key LIMIT 1)
         FROM period WHERE period.key IS NOT NULL
     )
     SELECT 'indicator' AS kind, code AS value FROM indicator WHERE code IS NOT NULL
     UNION ALL
     SELECT DISTINCT 'period', key FROM period WHERE key IS NOT NULL
     ORDER BY 1, 2`,
    { replacements: { id: panelVersionId }, type: QueryTypes.SELECT },
  );
  const indicators = rows.filter((r) => r.kind === "indicator").map((r) => r.value);
  return { indicators, periods: orderPeriods(rows.filter((r) => r.kind === "period").map((r) => r.value)) };
}

function orderPeriods(keys: readonly string[]): PeriodRef[] {
  const parsed: Period[] = [];
  const unparsed: string[] = [];
  for (const key of keys) {
    const result = parsePeriod(key);
    if (result.ok) parsed.push(result.period);
    else unparsed.push(key);
  }
  return [...sortPeriods(parsed).map((p) => ({ key: p.key, label: p.label })), ...unparsed.sort().map((k) => ({ key: k, label: k }))];
}

// COPY text format: tab-separated, \N for NULL, backslash escapes.
function unescapeCopyText(field: string): string {
  if (!field.includes("\\")) return field;
  return field.replace(/\\(.)/g, (_, c: string) => {
    switch (c) {
      case "t":
        return "\t";
      case "n":
        return "\n";
      case "r":
        return "\r";
      case "b":
        return "\b";
      case "f":
        return "\f";
      case "v":
        return "\v";
      default:
        return c;
    }
  });
}

/**
 * Streams (indicator, period, region, value) rows of one panel version with
 * COPY TO, so a million rows never sit in memory as row objects.
 */
async function streamObservations(
  panelVersionId: number,
  selection: { indicators: readonly string[] | null; periods: readonly string[] | null },
  onRow: (indicator: string, periodKey: string, region: string, value: number | null) => void,
): Promise<void> {
  const client = await intakePool().connect();
  try {
    // COPY takes no parameters: literals are quoted with pg's escapeLiteral.
    const list = (values: readonly string[]) => (values.length ? values.map((v) => client.escapeLiteral(v)).join(",") : "NULL");
    const filters: string[] = [`panel_version_id = ${Math.trunc(panelVersionId)}`];
    if (selection.indicators) filters.push(`indicator_code IN (${list(selection.indicators)})`);
    if (selection.periods) filters.push(`period_key IN (${list(selection.periods)})`);
    const stream = client.query(
      copyTo(`COPY (SELECT indicator_code, period_key, region_code, value FROM observations WHERE ${filters.join(" AND ")}) TO STDOUT`),
    );
    let rest = "";
    const handleLine = (line: string) => {
      if (line === "") return;
      const parts = line.split("\t");
      if (parts.length !== 4) throw new Error(`unexpected COPY line for panel version ${panelVersionId}: ${JSON.stringify(line.slice(0, 200))}`);
      const raw = parts[3];
      const value = raw === "\\N" ? null : Number(raw);
      onRow(unescapeCopyText(parts[0]), unescapeCopyText(parts[1]), unescapeCopyText(parts[2]), value);
    };
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      const text = rest + chunk.toString("utf8");
      const lines = text.split("\n");
      rest = lines.pop() ?? "";
      for (const line of lines) handleLine(line);
    }
    handleLine(rest);
  } finally {
    client.release();
  }
}

async function resolveSelection(panelVersionId: number, selection: PanelSelection) {
  const head = await panelVersionHead(panelVersionId);
  const dims = await panelDimensions(panelVersionId);
  const regionCodes = await regionCodesOf(head.boundary_version_id);
  let indicators = dims.indicators;
  if (selection.indicators) {
    const known = new Set(dims.indicators);
    const unknown = selection.indicators.filter((c) => !known.has(c));
    if (unknown.length) throw new Error(`panel version ${panelVersionId} has no indicator ${unknown.map((c) => `'${c}'`).join(", ")}; it has ${dims.indicators.join(", ") || "none"}`);
    const wanted = new Set(selection.indicators);
    indicators = dims.indicators.filter((c) => wanted.has(c));
  }
  let periods = dims.periods;
  if (selection.periods) {
    const known = new Set(dims.periods.map((p) => p.key));
    const unknown = selection.periods.filter((k) => !known.has(k));
    if (unknown.length) throw new Error(`panel version ${panelVersionId} has no period ${unknown.map((k) => `'${k}'`).join(", ")}`);
    const wanted = new Set(selection.periods);
    periods = dims.periods.filter((p) => wanted.has(p.key));
  }
  return { head, indicators, periods, regionCodes };
}

/**
 * Loads a panel version's values as nested Maps (see PanelMatrix).
 * @throws naming the panel version when it does not exist, or an indicator or period it lacks.
 */
export async function loadPanelMatrix(panelVersionId: number, selection: PanelSelection = {}): Promise<PanelMatrix> {
  const { head, indicators, periods, regionCodes } = await resolveSelection(panelVersionId, selection);
  const values = new Map<string, Map<string, Map<string, number | null>>>();
  for (const indicator of indicators) {
    const byPeriod = new Map<string, Map<string, number | null>>();
    for (const period of periods) byPeriod.set(period.key, new Map(regionCodes.map((code) => [code, null])));
    values.set(indicator, byPeriod);
  }
  await streamObservations(
    panelVersionId,
    { indicators: selection.indicators ? indicators : null, periods: selection.periods ? periods.map((p) => p.key) : null },
    (indicator, periodKey, region, value) => {
      const byRegion = values.get(indicator)?.get(periodKey);
      if (byRegion?.has(region)) byRegion.set(region, value);
    },
  );
  return { panelVersionId, boundaryVersionId: head.boundary_version_id, state: head.state, indicators, periods, regionCodes, values };
}

/** Loads a panel version's values as Float64Arrays (see PanelColumns); NaN marks missing. */
export async function loadPanelColumns(panelVersionId: number, selection: PanelSelection = {}): Promise<PanelColumns> {
  const { head, indicators, periods, regionCodes } = await resolveSelection(panelVersionId, selection);
  const regionIndex = new Map(regionCodes.map((code, i) => [code, i]));
  const periodIndex = new Map(periods.map((p, i) => [p.key, i]));
  const columns = new Map<string, Float64Array[]>();
  for (const indicator of indicators) columns.set(indicator, periods.map(() => new Float64Array(regionCodes.length).fill(Number.NaN)));
  await streamObservations(
    panelVersionId,
    { indicators: selection.indicators ? indicators : null, periods: selection.periods ? periods.map((p) => p.key) : null },
    (indicator, periodKey, region, value) => {
      const p = periodIndex.get(periodKey);
      const r = regionIndex.get(region);
      const series = columns.get(indicator);
      if (p === undefined || r === undefined || !series) return;
      series[p][r] = value === null ? Number.NaN : value;
    },
  );
  return { panelVersionId, boundaryVersionId: head.boundary_version_id, state: head.state, indicators, periods, regionCodes, columns };
}

// Versions never change content, so a parsed topology can be kept; a few at most. Only topologies whose
// checksum was verified are kept, keyed by id, key and checksum (validation moves a GeoJSON version's key).
const topologyCache = new Map<string, { topology: Topology; coordinates: "planar" | "lonlat" }>();
const TOPOLOGY_CACHE_SIZE = 4;

/** Forgets the verified topologies this process keeps (tests that change a stored file behind the app's back). */
export function forgetCachedTopologies(): void {
  topologyCache.clear();
}

interface TopologySource {
  s3_key: string;
  file_key: string | null;
  sha256: string;
  topology_sha256: string | null;
  format: string;
}

/**
 * The SHA-256 the file at s3_key must have: recorded at validation; before it,
 * the version's own copy's; null only for a GeoJSON version validated before
 * checksums of converted topologies were recorded (read as before, unverified).
 */
export function expectedTopologySha256(v: TopologySource): string | null {
  if (v.topology_sha256 !== null) return v.topology_sha256;
  if (v.s3_key === v.file_key || v.format === "topojson") return v.sha256;
  return null;
}

function coordinatesOf(topology: Topology): "planar" | "lonlat" {
  let bbox = topology.bbox as number[] | undefined;
  if (!bbox || bbox.length < 4) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    // A rejected upload's stored file may be GeoJSON or broken TopoJSON: no arcs, no extent.
    for (const arc of Array.isArray(topology.arcs) ? topology.arcs : []) {
      if (!Array.isArray(arc)) continue;
      let x = 0, y = 0;
      for (const point of arc) {
        if (!Array.isArray(point)) continue;
        const [px, py] = point as number[];
        if (topology.transform) {
          x += px;
          y += py;
        } else {
          x = px;
          y = py;
        }
        const gx = topology.transform ? x * topology.transform.scale[0] + topology.transform.translate[0] : x;
        const gy = topology.transform ? y * topology.transform.scale[1] + topology.transform.translate[1] : y;
        x0 = Math.min(x0, gx); x1 = Math.max(x1, gx); y0 = Math.min(y0, gy); y1 = Math.max(y1, gy);
      }
    }
    bbox = [x0, y0, x1, y1];
  }
  return bbox[0] >= -180 && bbox[2] <= 180 && bbox[1] >= -90 && bbox[3] <= 90 ? "lonlat" : "planar";
}

/**
 * The stored TopoJSON of a boundary version with the object and properties
 * that hold the regions, and the region codes in geometry order.
 * @throws naming the boundary version when it does not exist or its file cannot be read.
 */
export async function loadBoundaryTopology(boundaryVersionId: number): Promise<BoundaryTopology> {
  const rows = await db().query<
    { id: number; version: number; set_name: string; state: VersionState; object_name: string; id_property: string; name_property: string | null } & TopologySource
  >(
    `SELECT v.id, v.version, s.name AS set_name, v.state, v.s3_key, v.file_key, v.sha256, v.topology_sha256, v.format, v.object_name, v.id_property, v.name_property
       FROM boundary_versions v JOIN boundary_sets s ON s.id = v.boundary_set_id WHERE v.id = :id`,
    { replacements: { id: boundaryVersionId }, type: QueryTypes.SELECT },
  );
  const version = rows[0];
  if (!version) throw new Error(`boundary version ${boundaryVersionId} does not exist`);
  const expected = expectedTopologySha256(version);
  const cacheKey = `${boundaryVersionId}\u0000${version.s3_key}\u0000${expected ?? ""}`;
  let cached = topologyCache.get(cacheKey);
  if (!cached) {
    // Throws StoredFileChecksumError, naming the version, when the stored file is not the one recorded.
    const bytes = await readVersionFile(version.s3_key, expected, `boundary version ${version.version} of '${version.set_name}' (id ${boundaryVersionId})`);
    let topology: Topology;
    try {
      topology = JSON.parse(bytes.toString("utf8")) as Topology;
    } catch (err) {
      throw new Error(`boundary version ${boundaryVersionId}: stored TopoJSON ${version.s3_key} is not JSON (${err instanceof Error ? err.message : String(err)})`);
    }
    cached = { topology, coordinates: coordinatesOf(topology) };
    topologyCache.set(cacheKey, cached);
    if (topologyCache.size > TOPOLOGY_CACHE_SIZE) {
      const oldest = topologyCache.keys().next().value;
      if (oldest !== undefined) topologyCache.delete(oldest);
    }
  }
  const regionRows = await db().query<{ code: string; name: string | null }>("SELECT code, name FROM regions WHERE boundary_version_id = :id ORDER BY id", {
    replacements: { id: boundaryVersionId },
    type: QueryTypes.SELECT,
  });
  return {
    boundaryVersionId,
    state: version.state,
    topology: cached.topology,
    objectName: version.object_name,
    idProperty: version.id_property,
    nameProperty: version.name_property,
    regionCodes: regionRows.map((r) => r.code),
    regionNames: new Map(regionRows.map((r) => [r.code, r.name])),
    coordinates: cached.coordinates,
  };
}

export interface PublishedPanelVersion {
  panelVersionId: number;
  panelId: number;
  panelName: string;
  version: number;
  boundaryVersionId: number;
  boundarySetId: number;
  publishedAt: Date;
}

/** Published panel versions of a workspace, newest version of each panel first. */
export async function publishedPanelVersions(workspaceId: number): Promise<PublishedPanelVersion[]> {
  const rows = await db().query<{
    panel_version_id: number;
    panel_id: number;
    panel_name: string;
    version: number;
    boundary_version_id: number;
    boundary_set_id: number;
    published_at: Date;
  }>(
    `SELECT pv.id AS panel_version_id, p.id AS panel_id, p.name AS panel_name, pv.version, pv.boundary_version_id,
            p.boundary_set_id, pv.published_at
       FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND pv.state = 'published'
      ORDER BY p.name, pv.version DESC`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    panelVersionId: r.panel_version_id,
    panelId: r.panel_id,
    panelName: r.panel_name,
    version: r.version,
    boundaryVersionId: r.boundary_version_id,
    boundarySetId: r.boundary_set_id,
    publishedAt: r.published_at,
  }));
}

/** The newest published version of a panel, or null. */
export async function latestPublishedPanelVersion(workspaceId: number, panelId: number): Promise<PublishedPanelVersion | null> {
  const all = await publishedPanelVersions(workspaceId);
  return all.find((v) => v.panelId === panelId) ?? null;
}

/** Whether a panel version belongs to the workspace (and, when `publishedOnly`, is published). */
export async function panelVersionInWorkspace(workspaceId: number, panelVersionId: number, publishedOnly = true): Promise<boolean> {
  const rows = await db().query<{ state: VersionState }>(
    "SELECT pv.state FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE pv.id = :id AND p.workspace_id = :workspaceId",
    { replacements: { id: panelVersionId, workspaceId }, type: QueryTypes.SELECT },
  );
  const row = rows[0];
  return Boolean(row) && (!publishedOnly || row.state === "published");
}

/** Whether a boundary version belongs to the workspace (and, when `publishedOnly`, is published). */
export async function boundaryVersionInWorkspace(workspaceId: number, boundaryVersionId: number, publishedOnly = true): Promise<boolean> {
  const rows = await db().query<{ state: VersionState }>(
    "SELECT bv.state FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id WHERE bv.id = :id AND s.workspace_id = :workspaceId",
    { replacements: { id: boundaryVersionId, workspaceId }, type: QueryTypes.SELECT },
  );
  const row = rows[0];
  return Boolean(row) && (!publishedOnly || row.state === "published");
}

export interface IndicatorMeta {
  code: string;
  label: string;
  unit: string | null;
  description: string | null;
  source: string | null;
  higherIsBetter: boolean | null;
}

/**
 * Which indicator records a reader may see listed. An indicator record is
 * written when a panel version is ingested, before anyone validates or
 * publishes it, so its code, label and description can describe embargoed
 * data. "published" keeps only indicators that have observations in a
 * published panel version or that a run analysed (runs start only on published
 * versions); "all" is for roles holding `data.view-unpublished` (the roles table in docs/guarantees.md).
 */
export type IndicatorVisibility = "all" | "published";

export function indicatorVisibilityFor(role: Role): IndicatorVisibility {
  return can(role, "data.view-unpublished") ? "all" : "published";
}

/**
 * SQL condition: the indicator row aliased `alias` may be listed under
 * `visibility`. Both probes are index lookups (the observations' primary key
 * starts with panel_version_id, indicator_code).
 */
export function indicatorVisibleSql(alias: string, visibility: IndicatorVisibility): string {
  if (visibility === "all") return "TRUE";
  return `(EXISTS (SELECT 1 FROM panel_versions vis_pv JOIN panels vis_p ON vis_p.id = vis_pv.panel_id
                    WHERE vis_p.workspace_id = ${alias}.workspace_id AND vis_pv.state = 'published'
                      AND EXISTS (SELECT 1 FROM observations vis_o WHERE vis_o.panel_version_id = vis_pv.id AND vis_o.indicator_code = ${alias}.code))
        OR EXISTS (SELECT 1 FROM runs vis_r JOIN run_pieces vis_rp ON vis_rp.run_id = vis_r.id
                    WHERE vis_r.workspace_id = ${alias}.workspace_id AND vis_rp.indicator_code = ${alias}.code))`;
}

/** Indicator metadata of a workspace by code, limited to what `visibility` allows. */
export async function indicatorMetadata(workspaceId: number, visibility: IndicatorVisibility): Promise<IndicatorMeta[]> {
  const rows = await db().query<{ code: string; label: string; unit: string | null; description: string | null; source: string | null; higher_is_better: boolean | null }>(
    `SELECT i.code, i.label, i.unit, i.description, i.source, i.higher_is_better FROM indicators i
      WHERE i.workspace_id = :workspaceId AND ${indicatorVisibleSql("i", visibility)} ORDER BY i.code`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ code: r.code, label: r.label, unit: r.unit, description: r.description, source: r.source, higherIsBetter: r.higher_is_better }));
}

// ---------------------------------------------------------------- intake screens

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
  const rows = await db().query<VersionRow & { parent_name: string; report: Record<string, unknown> | null; layout: string; decimal_separator: string; mapping: unknown; boundary_version_id: number }>(
    `SELECT v.id, v.panel_id AS parent_id, p.name AS parent_name, v.version, v.state, v.file_name, v.byte_size, v.sha256, v.created_at,
            u.name AS created_by_name, v.validated_at, v.published_at, v.archived_at, v.row_count AS count,
            (v.report->>'errorCount')::int AS error_count, (v.report->>'warningCount')::int AS warning_count, v.diff, v.report,
            bv.version AS boundary_version, v.layout, v.decimal_separator, v.mapping, v.boundary_version_id
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
  };
}

// ---------------------------------------------------------------- boundaries preview

export const PREVIEW_RULES = /^(queen|rook|knn:([1-9]\d?)|band(:(\d+(\.\d+)?))?)$/;

export interface WeightsPreview {
  rule: string;
  coordinates: "planar" | "lonlat";
  ids: string[];
  /** Region centroids in the topology's coordinates, aligned with `ids`. */
  centroids: [number, number][];
  /** Undirected links between region indices (i < j); a one-way k-nearest link is drawn once. */
  links: [number, number][];
  histogram: { neighbours: number; regions: number }[];
  islands: string[];
  n: number;
  meanNeighbours: number;
  components: number;
  /** Distance band actually used (band rules), in km or coordinate units. */
  band: number | null;
}

/**
 * Neighbours of a boundary version under a weights rule, for the Boundaries
 * screen: centroids, links, the neighbour-count histogram and the islands.
 * @throws naming the rule when it is not one of queen, rook, knn:K, band, band:D.
 */
export async function boundaryWeightsPreview(boundaryVersionId: number, rule: string): Promise<WeightsPreview> {
  if (!PREVIEW_RULES.test(rule)) throw new Error(`unknown weights rule '${rule}'; use queen, rook, knn:K (K from 1 to 99), band or band:D`);
  const boundaries = await loadBoundaryTopology(boundaryVersionId);
  const options = { object: boundaries.objectName, idProperty: boundaries.idProperty };
  const weights = weightsFromTopology(boundaries.topology, rule, options);
  const points = regionCentroids(boundaries.topology, options);
  const summaryW = summariseWeights(weights);
  const seen = new Set<string>();
  const links: [number, number][] = [];
  for (let i = 0; i < weights.ids.length; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      const a = Math.min(i, j);
      const b = Math.max(i, j);
      const key = `${a}:${b}`;
      if (!seen.has(key)) {
        seen.add(key);
        links.push([a, b]);
      }
    }
  }
  const bandMatch = /^band:(.+)$/.exec(weights.rule);
  return {
    rule: weights.rule,
    coordinates: boundaries.coordinates,
    ids: [...weights.ids],
    centroids: Array.from(points.x, (x, i) => [x, points.y[i]] as [number, number]),
    links,
    histogram: summaryW.neighbourCounts.histogram.map((h) => ({ neighbours: h.neighbours, regions: h.regions })),
    islands: [...summaryW.islands],
    n: summaryW.n,
    meanNeighbours: summaryW.neighbourCounts.mean,
    components: summaryW.components.count,
    band: bandMatch ? Number(bandMatch[1]) : null,
  };
}
