/**
 * Reads of runs and results for the screens. Server-only. These do not
 * authorise: route handlers call requireMember first and pass the member's
 * workspace id, and every query is scoped by it.
 */
import { QueryTypes } from "sequelize";
import { db, selectTuples } from "@/lib/db";
import { indicatorMetadata, publishedPanelVersions, panelDimensions, type IndicatorMeta } from "@/lib/intake/published-panel";
import { harmonisationOfPanelVersion, type HarmonisationView } from "@/lib/intake/harmonisation";
import { CATALOGUE_FIELDS, catalogueAnswerText, catalogueRowsOf, type CatalogueAnswer, type CatalogueRow, type CatalogueRun } from "./catalogue-wire";
import { selectBaseline } from "./comparability";
import type { ResolvedRunParams } from "./schemas";
import type { RunState } from "./store";
import type { GiStarFields, LocalFields, ModelSuggestionWord, RegressionFields, SignificanceClass, WeightsUsed } from "./types";

export interface RunSummary {
  /** Global id: URLs and API parameters. */
  id: number;
  /** Per-workspace number: what labels show (lib/runs/label runLabel). */
  number: number;
  state: RunState;
  origin: string;
  rerunOf: number | null;
  /** The per-workspace number of the run this one reran. */
  rerunOfNumber: number | null;
  params: ResolvedRunParams;
  panelName: string;
  panelVersion: number;
  progress: number;
  piecesTotal: number;
  piecesDone: number;
  resultsTotal: number;
  periodsDone: number;
  significanceBasis: string | null;
  error: string | null;
  createdBy: string | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

interface RunRow {
  id: number;
  number: number;
  state: RunState;
  origin: string;
  rerun_of: number | null;
  rerun_of_number: number | null;
  params: ResolvedRunParams;
  panel_name: string;
  panel_version: number;
  progress: number;
  pieces_total: number;
  pieces_done: number;
  results_total: number;
  periods_done: string | number | null;
  significance_basis: string | null;
  error: string | null;
  created_by_name: string | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
}

const RUN_SELECT = `
  SELECT r.id, r.number, r.state, r.origin, r.rerun_of, (SELECT o.number FROM runs o WHERE o.id = r.rerun_of) AS rerun_of_number, r.params, p.name AS panel_name, pv.version AS panel_version, r.progress,
         r.pieces_total, r.pieces_done, r.results_total, r.significance_basis, r.error, u.name AS created_by_name,
         r.created_at, r.started_at, r.finished_at,
         (SELECT SUM(CASE WHEN rp.state = 'completed' THEN rp.periods_total ELSE rp.periods_done END) FROM run_pieces rp WHERE rp.run_id = r.id) AS periods_done
    FROM runs r
    JOIN panel_versions pv ON pv.id = r.panel_version_id
    JOIN panels p ON p.id = pv.panel_id
    LEFT JOIN users u ON u.id = r.created_by`;

function toSummary(r: RunRow): RunSummary {
  return {
    id: r.id,
    number: r.number,
    state: r.state,
    origin: r.origin,
    rerunOf: r.rerun_of,
    rerunOfNumber: r.rerun_of_number,
    params: r.params,
    panelName: r.panel_name,
    panelVersion: r.panel_version,
    progress: r.progress,
    piecesTotal: r.pieces_total,
    piecesDone: r.pieces_done,
    resultsTotal: r.results_total,
    periodsDone: Number(r.periods_done ?? 0),
    significanceBasis: r.significance_basis,
    error: r.error,
    createdBy: r.created_by_name,
    createdAt: r.created_at.toISOString(),
    startedAt: r.started_at?.toISOString() ?? null,
    finishedAt: r.finished_at?.toISOString() ?? null,
  };
}

/** The workspace's runs, newest first. */
export async function listRuns(workspaceId: number, limit = 50): Promise<RunSummary[]> {
  const rows = await db().query<RunRow>(`${RUN_SELECT} WHERE r.workspace_id = $1 ORDER BY r.id DESC LIMIT $2`, {
    bind: [workspaceId, limit],
    type: QueryTypes.SELECT,
  });
  return rows.map(toSummary);
}

export async function getRun(workspaceId: number, runId: number): Promise<RunSummary | null> {
  const rows = await db().query<RunRow>(`${RUN_SELECT} WHERE r.workspace_id = $1 AND r.id = $2`, { bind: [workspaceId, runId], type: QueryTypes.SELECT });
  return rows[0] ? toSummary(rows[0]) : null;
}

export interface RunPieceRow {
  indicator: string;
  state: RunState;
  attempts: number;
  periodsTotal: number;
  periodsDone: number;
  error: string | null;
}

export async function runPieces(runId: number): Promise<RunPieceRow[]> {
  const rows = await db().query<{ indicator_code: string; state: RunState; attempts: number; periods_total: number; periods_done: number; error: string | null }>(
    "SELECT indicator_code, state, attempts, periods_total, periods_done, error FROM run_pieces WHERE run_id = $1 ORDER BY indicator_code",
    { bind: [runId], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ indicator: r.indicator_code, state: r.state, attempts: r.attempts, periodsTotal: r.periods_total, periodsDone: r.periods_done, error: r.error }));
}

/** What the start form offers: published panel versions with their indicators and periods. */
export interface RunOption {
  panelVersionId: number;
  panelName: string;
  version: number;
  /** `rate`: a declared rate whose events and population are both in this version (the start form offers empirical-Bayes standardisation for it). */
  indicators: { code: string; label: string; rate: boolean }[];
  periods: string[];
  /**
   * Regions of the version's boundaries: the most local tests a period can
   * count (the start form's reachability warning; lib/runs/reachability).
   */
  regions: number;
}

export async function runOptions(workspaceId: number): Promise<RunOption[]> {
  const versions = await publishedPanelVersions(workspaceId);
  // Every indicator of a published version is visible to every role.
  const meta = await indicatorMetadata(workspaceId, "published");
  const labels = new Map(meta.map((m) => [m.code, m.label]));
  const rates = new Map(meta.flatMap((m) => (m.rate ? [[m.code, m.rate] as const] : [])));
  const boundaryIds = [...new Set(versions.map((v) => v.boundaryVersionId))];
  const regionRows = boundaryIds.length
    ? await db().query<{ id: number; region_count: number | null }>("SELECT id, region_count FROM boundary_versions WHERE id = ANY($1::int[])", {
        bind: [boundaryIds],
        type: QueryTypes.SELECT,
      })
    : [];
  const regionsOf = new Map(regionRows.map((r) => [r.id, r.region_count ?? 0]));
  const out: RunOption[] = [];
  for (const v of versions) {
    const dims = await panelDimensions(v.panelVersionId);
    out.push({
      panelVersionId: v.panelVersionId,
      panelName: v.panelName,
      version: v.version,
      indicators: dims.indicators.map((code) => {
        const rate = rates.get(code);
        return { code, label: labels.get(code) ?? code, rate: rate !== undefined && dims.indicators.includes(rate.events) && dims.indicators.includes(rate.population) };
      }),
      periods: dims.periods.map((p) => p.key),
      regions: regionsOf.get(v.boundaryVersionId) ?? 0,
    });
  }
  return out;
}

// ——— Catalogue ———

export type { CatalogueRow } from "./catalogue-wire";

/** The run_results column behind each wire field. */
const CATALOGUE_COLUMNS: Record<(typeof CATALOGUE_FIELDS)[number], string> = {
  runId: "run_id",
  indicator: "indicator_code",
  period: "period_key",
  periodIndex: "period_index",
  status: "status",
  note: "note",
  n: "n",
  I: "i",
  expectedI: "expected_i",
  z: "z_randomisation",
  p: "p_randomisation",
  pseudoP: "perm_p",
  adjustedP: "adjusted_p",
  significance: "significance",
  deltaI: "delta_i",
  gearyC: "geary_c",
  generalG: "general_g",
  localTests: "local_tests",
  residualI: "residual_i",
  residualP: "residual_p",
  modelSuggestion: "model_suggestion",
};

/** Wire fields that are not a stored column, as the SQL that computes them from a run_results row `rr`. */
const CATALOGUE_EXPRESSIONS: Partial<Record<string, string>> = {
  // Local Moran's tests are its regions with neighbours (lib/runs/reachability localTests).
  local_tests: "CASE WHEN rr.local_counts IS NULL THEN NULL ELSE rr.n - COALESCE((rr.local_counts->>'no-neighbours')::int, 0) END",
};

export interface CatalogueFilter {
  /** A run id, or null for the latest completed run of each indicator. */
  runId: number | null;
  classes?: readonly SignificanceClass[];
  /** Only rows whose residual diagnostics suggest one of these (rows without covariates never match). */
  suggestions?: readonly ModelSuggestionWord[];
  periodFrom?: string | null;
  periodTo?: string | null;
  /** Case-insensitive text in the indicator's code or label. */
  text?: string | null;
  limit?: number;
}

/**
 * The catalogue's answer as JSON text (lib/runs/catalogue-wire): one tuple per
 * indicator × period. Without a run, each indicator's rows come from the
 * latest completed run that analysed it. Period bounds compare period keys as
 * text (ISO-like keys such as 2019, 2019-Q3 sort correctly).
 */
export async function catalogueText(workspaceId: number, filter: CatalogueFilter): Promise<string> {
  const bind: unknown[] = [workspaceId];
  const where: string[] = [];
  let source: string;
  if (filter.runId !== null) {
    bind.push(filter.runId);
    source = `SELECT r.id AS run_id, rp.indicator_code FROM runs r JOIN run_pieces rp ON rp.run_id = r.id WHERE r.workspace_id = $1 AND r.id = $${bind.length}`;
  } else {
    source = `SELECT DISTINCT ON (rp.indicator_code) r.id AS run_id, rp.indicator_code
                FROM runs r JOIN run_pieces rp ON rp.run_id = r.id
               WHERE r.workspace_id = $1 AND r.state = 'completed'
               ORDER BY rp.indicator_code, r.finished_at DESC NULLS LAST, r.id DESC`;
  }
  if (filter.classes?.length) {
    bind.push(filter.classes);
    where.push(`rr.significance = ANY($${bind.length}::varchar[])`);
  }
  if (filter.suggestions?.length) {
    bind.push(filter.suggestions);
    where.push(`rr.model_suggestion = ANY($${bind.length}::varchar[])`);
  }
  if (filter.periodFrom) {
    bind.push(filter.periodFrom);
    where.push(`rr.period_key >= $${bind.length}`);
  }
  if (filter.periodTo) {
    bind.push(filter.periodTo);
    where.push(`rr.period_key <= $${bind.length}`);
  }
  if (filter.text) {
    bind.push(`%${filter.text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`);
    where.push(`(rr.indicator_code ILIKE $${bind.length} OR i.label ILIKE $${bind.length})`);
  }
  bind.push(Math.min(filter.limit ?? 20_000, 50_000));
  // Each tuple as JSON text written by PostgreSQL (see lib/runs/catalogue-wire
  // for why). Stored numbers are finite (lib/runs/store), so every value is a
  // JSON number, string or null; float8 text is the shortest exact form, so the
  // numbers parse back bit for bit.
  // The rows are sorted before the JSON is built: sorting the built text
  // spilled to disk at 10,000 rows with the default work_mem.
  const columns = CATALOGUE_FIELDS.map((f) => CATALOGUE_COLUMNS[f]);
  const rows = await selectTuples<[tuple: string, indicator: string, runId: number]>(
    `WITH chosen AS (${source})
     SELECT json_build_array(${columns.map((c) => `t.${c}`).join(", ")})::text, t.indicator_code, t.run_id
       FROM (SELECT ${columns.map((c) => (CATALOGUE_EXPRESSIONS[c] ? `${CATALOGUE_EXPRESSIONS[c]} AS ${c}` : `rr.${c}`)).join(", ")}
               FROM chosen c
               JOIN run_results rr ON rr.run_id = c.run_id AND rr.indicator_code = c.indicator_code
               LEFT JOIN indicators i ON i.workspace_id = $1 AND i.code = rr.indicator_code
              ${where.length ? `WHERE ${where.join(" AND ")}` : ""}
              ORDER BY rr.indicator_code, rr.period_index
              LIMIT $${bind.length}) t
      ORDER BY t.indicator_code, t.period_index`,
    bind,
  );
  const codes = [...new Set(rows.map((r) => r[1]))];
  const indicators = codes.length
    ? await db().query<{ code: string; label: string | null; unit: string | null }>(
        "SELECT code, label, unit FROM indicators WHERE workspace_id = $1 AND code = ANY($2::varchar[]) ORDER BY code",
        { bind: [workspaceId, codes], type: QueryTypes.SELECT },
      )
    : [];
  return catalogueAnswerText(
    indicators.map((i) => ({ code: i.code, label: i.label ?? i.code, unit: i.unit })),
    rows.map((r) => r[0]),
    await catalogueRuns(workspaceId, [...new Set(rows.map((r) => Number(r[2])))]),
  );
}

/** Per run of the answer, what its notes on reachable significance need (lib/runs/catalogue-wire CatalogueRun). */
async function catalogueRuns(workspaceId: number, runIds: readonly number[]): Promise<CatalogueRun[]> {
  if (runIds.length === 0) return [];
  const runs = await db().query<{ id: number; params: ResolvedRunParams; global_tests: string | number }>(
    `SELECT r.id, r.params, (SELECT count(*) FROM run_results rr WHERE rr.run_id = r.id AND rr.adjusted_p IS NOT NULL) AS global_tests
       FROM runs r WHERE r.workspace_id = $1 AND r.id = ANY($2::int[]) ORDER BY r.id`,
    { bind: [workspaceId, runIds], type: QueryTypes.SELECT },
  );
  return runs.map((r) => ({
    id: r.id,
    permutations: r.params.permutations,
    alpha: r.params.alpha,
    correction: r.params.correction,
    sequentialExtremes: r.params.sequentialExtremes ?? null,
    globalTests: Number(r.global_tests),
  }));
}

/** The catalogue as parsed tuples. */
export async function catalogueAnswer(workspaceId: number, filter: CatalogueFilter): Promise<CatalogueAnswer> {
  return JSON.parse(await catalogueText(workspaceId, filter)) as CatalogueAnswer;
}

/** The catalogue as row objects (for the CSV export and scripts). */
export async function catalogueRows(workspaceId: number, filter: CatalogueFilter): Promise<CatalogueRow[]> {
  return catalogueRowsOf(await catalogueAnswer(workspaceId, filter));
}

// ——— Timeline ———

export interface TimelinePoint {
  period: string;
  status: "computed" | "not-computed";
  note: string | null;
  n: number;
  excludedMissing: number;
  excludedIslands: number;
  I: number | null;
  expectedI: number | null;
  zNormality: number | null;
  zRandomisation: number | null;
  pRandomisation: number | null;
  varianceNormality: number | null;
  varianceRandomisation: number | null;
  permutationMean: number | null;
  permutationSd: number | null;
  pseudoP: number | null;
  bandLow: number | null;
  bandHigh: number | null;
  adjustedP: number | null;
  significance: SignificanceClass | null;
  deltaI: number | null;
  gearyC: number | null;
  gearyPseudoP: number | null;
  generalG: number | null;
  generalGPseudoP: number | null;
  weights: WeightsUsed | null;
  localCounts: Record<string, number> | null;
  /** Moran's I of the residuals after the run's covariates (null without covariates or when not fitted), with E[I] and its two-sided p. */
  residualI: number | null;
  residualExpectedI: number | null;
  residualP: number | null;
  modelSuggestion: ModelSuggestionWord | null;
  /** Why the regression was not fitted in this period (names the covariates); null otherwise. */
  regressionMessage: string | null;
}

export interface Timeline {
  run: RunSummary;
  indicator: IndicatorMeta;
  points: TimelinePoint[];
  /** When the run's panel version was harmonised across a boundary reform: how (carried periods, crosswalk, methods); else null. */
  harmonisation: HarmonisationView | null;
}

/** The run to show for an indicator: the given run, else the latest completed run that analysed it. */
export async function resolveRunForIndicator(workspaceId: number, indicator: string, runId: number | null): Promise<RunSummary | null> {
  if (runId !== null) return getRun(workspaceId, runId);
  const rows = await db().query<{ id: number }>(
    `SELECT r.id FROM runs r JOIN run_pieces rp ON rp.run_id = r.id
      WHERE r.workspace_id = $1 AND r.state = 'completed' AND rp.indicator_code = $2
      ORDER BY r.finished_at DESC NULLS LAST, r.id DESC LIMIT 1`,
    { bind: [workspaceId, indicator], type: QueryTypes.SELECT },
  );
  return rows[0] ? getRun(workspaceId, rows[0].id) : null;
}

export async function indicatorOf(workspaceId: number, code: string): Promise<IndicatorMeta> {
  // Any code can be asked for with any run id; a code a run analysed is always
  // "published", so this never hides metadata a result needs.
  const all = await indicatorMetadata(workspaceId, "published");
  return all.find((m) => m.code === code) ?? { code, label: code, unit: null, description: null, source: null, higherIsBetter: null, rate: null };
}

export async function timeline(workspaceId: number, indicator: string, runId: number | null): Promise<Timeline | null> {
  const run = await resolveRunForIndicator(workspaceId, indicator, runId);
  if (!run) return null;
  const rows = await db().query<{
    period_key: string;
    status: "computed" | "not-computed";
    note: string | null;
    n: number;
    excluded_missing: number;
    excluded_islands: number;
    i: number | null;
    expected_i: number | null;
    z_normality: number | null;
    z_randomisation: number | null;
    p_randomisation: number | null;
    variance_normality: number | null;
    variance_randomisation: number | null;
    perm_mean: number | null;
    perm_sd: number | null;
    perm_p: number | null;
    band_low: number | null;
    band_high: number | null;
    adjusted_p: number | null;
    significance: SignificanceClass | null;
    delta_i: number | null;
    geary_c: number | null;
    geary_pseudo_p: number | null;
    general_g: number | null;
    general_g_pseudo_p: number | null;
    weights: WeightsUsed | null;
    local_counts: Record<string, number> | null;
    residual_i: number | null;
    residual_p: number | null;
    model_suggestion: ModelSuggestionWord | null;
    residual_expected_i: number | null;
    regression_message: string | null;
  }>(
    `SELECT period_key, status, note, n, excluded_missing, excluded_islands, i, expected_i, z_normality, z_randomisation, p_randomisation,
            variance_normality, variance_randomisation, perm_mean, perm_sd, perm_p, band_low, band_high, adjusted_p, significance, delta_i,
            geary_c, geary_pseudo_p, general_g, general_g_pseudo_p, weights, local_counts, residual_i, residual_p, model_suggestion,
            (regression->'moran'->>'expectedI')::double precision AS residual_expected_i, regression->>'message' AS regression_message
       FROM run_results WHERE run_id = $1 AND indicator_code = $2 ORDER BY period_index`,
    { bind: [run.id, indicator], type: QueryTypes.SELECT },
  );
  const panelVersion = await db().query<{ panel_version_id: number }>("SELECT panel_version_id FROM runs WHERE id = $1", { bind: [run.id], type: QueryTypes.SELECT });
  return {
    run,
    indicator: await indicatorOf(workspaceId, indicator),
    harmonisation: panelVersion[0] ? await harmonisationOfPanelVersion(workspaceId, panelVersion[0].panel_version_id) : null,
    points: rows.map((r) => ({
      period: r.period_key,
      status: r.status,
      note: r.note,
      n: r.n,
      excludedMissing: r.excluded_missing,
      excludedIslands: r.excluded_islands,
      I: r.i,
      expectedI: r.expected_i,
      zNormality: r.z_normality,
      zRandomisation: r.z_randomisation,
      pRandomisation: r.p_randomisation,
      varianceNormality: r.variance_normality,
      varianceRandomisation: r.variance_randomisation,
      permutationMean: r.perm_mean,
      permutationSd: r.perm_sd,
      pseudoP: r.perm_p,
      bandLow: r.band_low,
      bandHigh: r.band_high,
      adjustedP: r.adjusted_p,
      significance: r.significance,
      deltaI: r.delta_i,
      gearyC: r.geary_c,
      gearyPseudoP: r.geary_pseudo_p,
      generalG: r.general_g,
      generalGPseudoP: r.general_g_pseudo_p,
      weights: r.weights,
      localCounts: r.local_counts,
      residualI: r.residual_i,
      residualExpectedI: r.residual_expected_i,
      residualP: r.residual_p,
      modelSuggestion: r.model_suggestion,
      regressionMessage: r.regression_message,
    })),
  };
}

/** One stored result with its local fields (map screen). */
export async function storedResult(runId: number, indicator: string, period: string) {
  const rows = await db().query<{
    status: string;
    note: string | null;
    n: number;
    i: number | null;
    expected_i: number | null;
    perm_p: number | null;
    adjusted_p: number | null;
    significance: SignificanceClass | null;
    local: LocalFields | null;
    gi_star: GiStarFields | null;
    regression: RegressionFields | null;
  }>(
    "SELECT status, note, n, i, expected_i, perm_p, adjusted_p, significance, local, gi_star, regression FROM run_results WHERE run_id = $1 AND indicator_code = $2 AND period_key = $3",
    { bind: [runId, indicator, period], type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

// ——— Desk ———

export interface Movement {
  indicator: string;
  indicatorLabel: string;
  period: string;
  previousPeriod: string | null;
  I: number;
  deltaI: number;
  significance: SignificanceClass | null;
}

export interface ClassChange {
  indicator: string;
  indicatorLabel: string;
  period: string;
  before: SignificanceClass | null;
  after: SignificanceClass | null;
  previousRunId: number;
}

/** The latest run's panel was last computed another way: said instead of any comparison. */
export interface MethodChange {
  /** The newest earlier run of the same panel (computed differently). */
  runId: number;
  /** Its per-workspace number (what the Desk shows). */
  runNumber: number;
  /** "weights changed from queen to rook; no comparison" */
  sentence: string;
}

export interface DeskSummary {
  runs: RunSummary[];
  latest: RunSummary | null;
  /** The newest earlier run of the same panel computed the same way (lib/runs/comparability); null when there is none. */
  previous: RunSummary | null;
  /** Set when earlier runs of the panel exist but none computed the same way. */
  methodChange: MethodChange | null;
  movements: Movement[];
  classChanges: ClassChange[];
  counts: Record<SignificanceClass, number> | null;
}

/**
 * The latest completed run, its largest changes in I from one period to the
 * next (within the run, so under one method), and the indicator-periods
 * whose class differs from the newest earlier completed run of the same
 * panel computed the same way. When the panel's earlier runs were all
 * computed differently, that is reported as a change of method and nothing
 * is compared.
 */
export async function deskSummary(workspaceId: number): Promise<DeskSummary> {
  const runs = await listRuns(workspaceId, 6);
  const completed = await db().query<{ id: number; panel_id: number; params: Record<string, unknown> }>(
    `SELECT r.id, pv.panel_id, r.params FROM runs r JOIN panel_versions pv ON pv.id = r.panel_version_id
      WHERE r.workspace_id = $1 AND r.state = 'completed' ORDER BY r.finished_at DESC NULLS LAST, r.id DESC LIMIT 1`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  if (!completed[0]) return { runs, latest: null, previous: null, methodChange: null, movements: [], classChanges: [], counts: null };
  const latestId = completed[0].id;
  const latest = await getRun(workspaceId, latestId);
  const labels = new Map((await indicatorMetadata(workspaceId, "published")).map((m) => [m.code, m.label]));
  const moved = await db().query<{ indicator_code: string; period_key: string; prev: string | null; i: number; delta_i: number; significance: SignificanceClass | null }>(
    `SELECT rr.indicator_code, rr.period_key, prev.period_key AS prev, rr.i, rr.delta_i, rr.significance
       FROM run_results rr
       LEFT JOIN run_results prev ON prev.run_id = rr.run_id AND prev.indicator_code = rr.indicator_code AND prev.period_index = rr.period_index - 1
      WHERE rr.run_id = $1 AND rr.delta_i IS NOT NULL ORDER BY abs(rr.delta_i) DESC LIMIT 6`,
    { bind: [latestId], type: QueryTypes.SELECT },
  );
  const countRows = await db().query<{ significance: SignificanceClass; count: string }>(
    "SELECT significance, count(*) AS count FROM run_results WHERE run_id = $1 AND significance IS NOT NULL GROUP BY significance",
    { bind: [latestId], type: QueryTypes.SELECT },
  );
  const counts: Record<SignificanceClass, number> = { clustering: 0, dispersion: 0, "not-significant": 0 };
  for (const c of countRows) counts[c.significance] = Number(c.count);
  const earlier = await db().query<{ id: number; panel_id: number; params: Record<string, unknown> }>(
    `SELECT r.id, pv.panel_id, r.params FROM runs r JOIN panel_versions pv ON pv.id = r.panel_version_id
      WHERE r.workspace_id = $1 AND r.state = 'completed' AND r.id <> $2 AND pv.panel_id = $3
      ORDER BY r.finished_at DESC NULLS LAST, r.id DESC LIMIT 500`,
    { bind: [workspaceId, latestId, completed[0].panel_id], type: QueryTypes.SELECT },
  );
  const toComparable = (r: { id: number; panel_id: number; params: Record<string, unknown> }) => ({ id: Number(r.id), panelId: Number(r.panel_id), params: r.params });
  const baseline = selectBaseline(toComparable(completed[0]), earlier.map(toComparable));
  const methodChange: MethodChange | null =
    baseline.kind === "method-changed" ? { runId: baseline.run.id, runNumber: (await getRun(workspaceId, baseline.run.id))?.number ?? 0, sentence: baseline.sentence } : null;
  const previousId = baseline.kind === "comparable" ? baseline.run.id : null;
  let classChanges: ClassChange[] = [];
  if (previousId !== null) {
    const changed = await db().query<{ indicator_code: string; period_key: string; before: SignificanceClass | null; after: SignificanceClass | null }>(
      `SELECT a.indicator_code, a.period_key, b.significance AS before, a.significance AS after
         FROM run_results a JOIN run_results b ON b.run_id = $2 AND b.indicator_code = a.indicator_code AND b.period_key = a.period_key
        WHERE a.run_id = $1 AND a.significance IS DISTINCT FROM b.significance
        ORDER BY a.indicator_code, a.period_index LIMIT 12`,
      { bind: [latestId, previousId], type: QueryTypes.SELECT },
    );
    classChanges = changed.map((c) => ({
      indicator: c.indicator_code,
      indicatorLabel: labels.get(c.indicator_code) ?? c.indicator_code,
      period: c.period_key,
      before: c.before,
      after: c.after,
      previousRunId: previousId,
    }));
  }
  return {
    runs,
    latest,
    previous: previousId !== null ? await getRun(workspaceId, previousId) : null,
    methodChange,
    movements: moved.map((m) => ({
      indicator: m.indicator_code,
      indicatorLabel: labels.get(m.indicator_code) ?? m.indicator_code,
      period: m.period_key,
      previousPeriod: m.prev,
      I: m.i,
      deltaI: m.delta_i,
      significance: m.significance,
    })),
    classChanges,
    counts,
  };
}

/** Indicators analysed by at least one completed run, with labels (selectors of the timeline, map and comparison). */
export async function analysedIndicators(workspaceId: number): Promise<{ code: string; label: string }[]> {
  const rows = await db().query<{ code: string; label: string | null }>(
    `SELECT DISTINCT rp.indicator_code AS code, i.label FROM run_pieces rp JOIN runs r ON r.id = rp.run_id
       LEFT JOIN indicators i ON i.workspace_id = r.workspace_id AND i.code = rp.indicator_code
      WHERE r.workspace_id = $1 AND r.state = 'completed' ORDER BY 1`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ code: r.code, label: r.label ?? r.code }));
}
