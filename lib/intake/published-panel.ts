/**
 * The published-panel reader: a panel version's values (as Maps or typed
 * arrays), its indicators and periods, the published versions of a workspace,
 * and which indicator records a reader may see. Runs, digests and the intake
 * screens read panels through here. Server-only. These functions do not
 * authorise: a route handler or server action calls requireMember first and
 * passes ids that belong to that workspace (`panelVersionInWorkspace`).
 *
 * Analyses must only read published versions; `latestPublishedPanelVersion`
 * and `publishedPanelVersions` return only those.
 */
import { to as copyTo } from "pg-copy-streams";
import { QueryTypes, type Transaction } from "sequelize";
import { db } from "@/lib/db";
import { can, type Role } from "@/lib/auth/roles";
import type { VersionState } from "@/models/intake-types";
import { parsePeriod, sortPeriods, type Period } from "./periods";
import { intakePool } from "./ingest-db";
import type { RateDeclaration, RateSpec } from "./rates";

export interface PeriodRef {
  key: string;
  label: string;
}

/**
 * A panel version as indicator × period × region values.
 *
 * - `regionCodes`: every region of the boundary version the panel was matched
 *   against, in the boundary file's geometry order (the order of
 *   `loadBoundaryTopology(...).regionCodes` in lib/geometry/boundary-topology).
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

export interface IndicatorMeta {
  code: string;
  label: string;
  unit: string | null;
  description: string | null;
  source: string | null;
  higherIsBetter: boolean | null;
  /** Set when the indicator is declared a rate: events / population × multiplier. */
  rate: RateSpec | null;
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

interface IndicatorRow {
  code: string;
  label: string;
  unit: string | null;
  description: string | null;
  source: string | null;
  higher_is_better: boolean | null;
  rate_events_code: string | null;
  rate_population_code: string | null;
  rate_multiplier: number | null;
}

function rateOf(r: Pick<IndicatorRow, "rate_events_code" | "rate_population_code" | "rate_multiplier">): RateSpec | null {
  if (r.rate_events_code === null || r.rate_population_code === null || r.rate_multiplier === null) return null;
  return { events: r.rate_events_code, population: r.rate_population_code, multiplier: r.rate_multiplier as RateSpec["multiplier"] };
}

/** Indicator metadata of a workspace by code, limited to what `visibility` allows. */
export async function indicatorMetadata(workspaceId: number, visibility: IndicatorVisibility): Promise<IndicatorMeta[]> {
  const rows = await db().query<IndicatorRow>(
    `SELECT i.code, i.label, i.unit, i.description, i.source, i.higher_is_better, i.rate_events_code, i.rate_population_code, i.rate_multiplier
       FROM indicators i
      WHERE i.workspace_id = :workspaceId AND ${indicatorVisibleSql("i", visibility)} ORDER BY i.code`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ code: r.code, label: r.label, unit: r.unit, description: r.description, source: r.source, higherIsBetter: r.higher_is_better, rate: rateOf(r) }));
}

/** The rate declarations of a workspace's indicator records, by rate code. */
export async function rateDeclarationsOf(workspaceId: number, transaction?: Transaction): Promise<RateDeclaration[]> {
  const rows = await db().query<Pick<IndicatorRow, "code" | "rate_events_code" | "rate_population_code" | "rate_multiplier">>(
    `SELECT code, rate_events_code, rate_population_code, rate_multiplier FROM indicators
      WHERE workspace_id = :workspaceId AND rate_events_code IS NOT NULL ORDER BY code`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.flatMap((r) => {
    const rate = rateOf(r);
    return rate === null ? [] : [{ indicator: r.code, ...rate }];
  });
}

/** A rate's inputs in one panel version: events and population per period and region (NaN where missing). */
export interface RateColumns {
  indicator: string;
  events: Float64Array[];
  population: Float64Array[];
  multiplier: number;
  /** As in the panel: `events[p][r]` is period `periods[p]`, region `regionCodes[r]`. */
  periods: PeriodRef[];
  regionCodes: string[];
}

/**
 * The events and population columns of a rate indicator in a loaded panel
 * version (pure: no database). Load the panel with both codes selected, e.g.
 * `loadPanelColumns(id, { indicators: [rate.events, rate.population] })`.
 * @throws naming the rate and the code the panel lacks.
 */
export function rateColumnsOf(panel: Pick<PanelColumns, "columns" | "periods" | "regionCodes" | "panelVersionId">, rate: RateDeclaration): RateColumns {
  const events = panel.columns.get(rate.events);
  const population = panel.columns.get(rate.population);
  const lacking = [events ? null : rate.events, population ? null : rate.population].filter((c): c is string => c !== null);
  if (!events || !population) {
    throw new Error(`panel version ${panel.panelVersionId} has no indicator ${lacking.map((c) => `'${c}'`).join(" or ")}, which the rate '${rate.indicator}' divides`);
  }
  return { indicator: rate.indicator, events, population, multiplier: rate.multiplier, periods: panel.periods, regionCodes: panel.regionCodes };
}
