/**
 * Screens' computations that need the database: the map's data, the
 * comparison of two periods and the robustness strip. Server-only; callers
 * authorise first and pass a run of the member's workspace.
 */
import { loadBoundaryTopology } from "@/lib/geometry/boundary-topology";
import { loadPanelMatrix } from "@/lib/intake/published-panel";
import { NotFoundError } from "@/lib/http/errors";
import { clusterTransitionTable, comparePeriods, robustnessStrip, type ClusterTransitionTable, type PeriodComparison, type RobustnessEntry } from "./compare";
import { panelTransitions, type PanelTransitions } from "./panel-transitions";
import { storedResult, type RunSummary } from "./queries";
import { geometryFor } from "./worker";
import type { GiStarFields, LocalFields, RegressionFields, SignificanceClass } from "./types";

function requirePeriod(run: RunSummary, period: string): void {
  if (!run.params.periods.includes(period)) throw new NotFoundError(`Run ${run.id} has no period "${period}".`);
}
function requireIndicator(run: RunSummary, indicator: string): void {
  if (!run.params.indicators.includes(indicator)) throw new NotFoundError(`Run ${run.id} did not analyse indicator "${indicator}".`);
}

export interface MapPeriod {
  period: string;
  status: string;
  note: string | null;
  n: number;
  I: number | null;
  expectedI: number | null;
  pseudoP: number | null;
  adjustedP: number | null;
  significance: SignificanceClass | null;
  /** Raw value per region code (null = missing). */
  values: Record<string, number | null>;
  local: LocalFields | null;
  /**
   * Local Gi* per region (z, p, classes after the run's correction); null when
   * the run stored none: no local results, or a run from before Gi* was stored.
   */
  giStar: GiStarFields | null;
  /** The regression on the run's covariates and its residual diagnostics; null when the run controls for nothing or this indicator is a covariate. */
  regression: RegressionFields | null;
}

export async function mapPeriod(run: RunSummary, indicator: string, period: string): Promise<MapPeriod> {
  requireIndicator(run, indicator);
  requirePeriod(run, period);
  const [stored, matrix] = await Promise.all([
    storedResult(run.id, indicator, period),
    loadPanelMatrix(run.params.panelVersionId, { indicators: [indicator], periods: [period] }),
  ]);
  if (!stored) throw new NotFoundError(`Run ${run.id} has no result for "${indicator}" in ${period} yet.`);
  const values: Record<string, number | null> = {};
  for (const [code, v] of matrix.values.get(indicator)?.get(period) ?? new Map<string, number | null>()) values[code] = v;
  return {
    period,
    status: stored.status,
    note: stored.note,
    n: stored.n,
    I: stored.i,
    expectedI: stored.expected_i,
    pseudoP: stored.perm_p,
    adjustedP: stored.adjusted_p,
    significance: stored.significance,
    values,
    local: stored.local,
    giStar: stored.gi_star,
    regression: stored.regression,
  };
}

export interface MapGeometry {
  boundaryVersionId: number;
  topology: unknown;
  objectName: string;
  idProperty: string;
  coordinates: "planar" | "lonlat";
  names: Record<string, string | null>;
}

export async function mapGeometry(run: RunSummary): Promise<MapGeometry> {
  const boundary = await loadBoundaryTopology(run.params.boundaryVersionId);
  return {
    boundaryVersionId: boundary.boundaryVersionId,
    topology: boundary.topology,
    objectName: boundary.objectName,
    idProperty: boundary.idProperty,
    coordinates: boundary.coordinates,
    names: Object.fromEntries(boundary.regionNames),
  };
}

export interface Comparison extends PeriodComparison {
  indicator: string;
  earlierResult: { I: number | null; pseudoP: number | null; significance: SignificanceClass | null; n: number } | null;
  laterResult: { I: number | null; pseudoP: number | null; significance: SignificanceClass | null; n: number } | null;
  transitions: ClusterTransitionTable | null;
}

const comparisonCache = new Map<string, Comparison>();

export async function comparison(run: RunSummary, indicator: string, earlier: string, later: string): Promise<Comparison> {
  requireIndicator(run, indicator);
  requirePeriod(run, earlier);
  requirePeriod(run, later);
  const key = `${run.id}|${indicator}|${earlier}|${later}`;
  const cached = comparisonCache.get(key);
  if (cached) return cached;
  const [geometry, matrix, a, b] = await Promise.all([
    geometryFor(run.params),
    loadPanelMatrix(run.params.panelVersionId, { indicators: [indicator], periods: [earlier, later] }),
    storedResult(run.id, indicator, earlier),
    storedResult(run.id, indicator, later),
  ]);
  const byPeriod = matrix.values.get(indicator);
  const empty = new Map<string, number | null>();
  const computed = comparePeriods(geometry, run.params, earlier, later, byPeriod?.get(earlier) ?? empty, byPeriod?.get(later) ?? empty);
  const summary = (r: typeof a) => (r ? { I: r.i, pseudoP: r.perm_p, significance: r.significance, n: r.n } : null);
  const result: Comparison = {
    ...computed,
    indicator,
    earlierResult: summary(a),
    laterResult: summary(b),
    transitions: a?.local && b?.local ? clusterTransitionTable(a.local, b.local) : null,
  };
  comparisonCache.set(key, result);
  if (comparisonCache.size > 200) comparisonCache.delete(comparisonCache.keys().next().value as string);
  return result;
}

const panelTransitionsCache = new Map<string, PanelTransitions>();

/** The spatial Markov tables of one indicator over all of the run's periods (lib/runs/panel-transitions.ts). */
export async function loadPanelTransitions(run: RunSummary, indicator: string, classes: number): Promise<PanelTransitions> {
  requireIndicator(run, indicator);
  const key = `${run.id}|${indicator}|${classes}`;
  const cached = panelTransitionsCache.get(key);
  if (cached) return cached;
  const [geometry, matrix] = await Promise.all([
    geometryFor(run.params),
    loadPanelMatrix(run.params.panelVersionId, { indicators: [indicator], periods: run.params.periods }),
  ]);
  const result = panelTransitions(geometry, run.params, indicator, matrix.values.get(indicator) ?? new Map(), classes);
  panelTransitionsCache.set(key, result);
  if (panelTransitionsCache.size > 200) panelTransitionsCache.delete(panelTransitionsCache.keys().next().value as string);
  return result;
}

const robustnessCache = new Map<string, RobustnessEntry[]>();

export async function robustness(run: RunSummary, indicator: string, period: string): Promise<RobustnessEntry[]> {
  requireIndicator(run, indicator);
  requirePeriod(run, period);
  const key = `${run.id}|${indicator}|${period}`;
  const cached = robustnessCache.get(key);
  if (cached) return cached;
  const [boundary, matrix] = await Promise.all([
    loadBoundaryTopology(run.params.boundaryVersionId),
    loadPanelMatrix(run.params.panelVersionId, { indicators: [indicator], periods: [period] }),
  ]);
  const values = matrix.values.get(indicator)?.get(period) ?? new Map<string, number | null>();
  const entries = robustnessStrip(boundary.topology, { object: boundary.objectName, idProperty: boundary.idProperty }, run.params, values);
  robustnessCache.set(key, entries);
  if (robustnessCache.size > 200) robustnessCache.delete(robustnessCache.keys().next().value as string);
  return entries;
}
