/**
 * Screens' computations that need the database: the map's data, the
 * comparison of two periods and the robustness strip. Server-only; callers
 * authorise first and pass a run of the member's workspace.
 */
import { loadBoundaryTopology } from "@/lib/geometry/boundary-topology";
import { loadPanelMatrix, rateDeclarationsOf } from "@/lib/intake/published-panel";
import { globalEmpiricalBayesRates, localEmpiricalBayesRates, prepareAnalysis } from "@/lib/spatial";
import { rateValuesOf } from "./compute";
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
  const eb = run.params.empiricalBayes?.find((d) => d.indicator === indicator) ?? null;
  const [boundary, matrix] = await Promise.all([
    loadBoundaryTopology(run.params.boundaryVersionId),
    loadPanelMatrix(run.params.panelVersionId, { indicators: eb ? [indicator, eb.events, eb.population] : [indicator], periods: [period] }),
  ]);
  const empty = new Map<string, number | null>();
  const values = matrix.values.get(indicator)?.get(period) ?? empty;
  const rate = eb
    ? {
        events: eb.events,
        population: eb.population,
        eventValues: matrix.values.get(eb.events)?.get(period) ?? empty,
        populationValues: matrix.values.get(eb.population)?.get(period) ?? empty,
      }
    : undefined;
  const entries = robustnessStrip(boundary.topology, { object: boundary.objectName, idProperty: boundary.idProperty }, run.params, values, rate);
  robustnessCache.set(key, entries);
  if (robustnessCache.size > 200) robustnessCache.delete(robustnessCache.keys().next().value as string);
  return entries;
}

/** One region of the map's rate layers: raw and smoothed rates (× the rate's multiplier). */
export interface RegionRates {
  events: number;
  population: number;
  raw: number;
  /** Global empirical-Bayes rate (Marshall 1991): shrunk towards the overall rate. */
  global: number;
  /** Local empirical-Bayes rate (Marshall 1991): shrunk towards the rate of the region and its neighbours under the run's weights. */
  local: number;
  /** Regions in the local neighbourhood, the region itself included (1: no neighbours, the local rate is the raw rate). */
  neighbourhood: number;
}

export interface MapRates {
  period: string;
  /** The rate's declaration; null when the indicator is not a declared rate (no rate layers). */
  rate: { events: string; population: string; multiplier: number } | null;
  /** Overall rate Σ events / Σ population × multiplier of the regions with both. */
  overallRate: number | null;
  /** Per region code; null where the events or the population are missing (or the population is not positive). */
  regions: Record<string, RegionRates | null>;
  /** Why no layer could be computed (too few regions with data, say); null when computed. */
  problem: string | null;
}

/**
 * The map's rate layers for a rate indicator in one period of a run: raw
 * rates, global and local empirical-Bayes rates (lib/spatial
 * globalEmpiricalBayesRates, localEmpiricalBayesRates) from the panel
 * version's events and population of that period, the local neighbourhoods
 * from the run's weights rule (island policy "exclude" read as "keep": a
 * region without neighbours keeps its raw rate as its local rate). The
 * declaration is the one the run froze (empirical-Bayes runs) or else the
 * workspace's current one.
 */
export async function mapRates(run: RunSummary, workspaceId: number, indicator: string, period: string): Promise<MapRates> {
  requireIndicator(run, indicator);
  requirePeriod(run, period);
  const declared = (await rateDeclarationsOf(workspaceId)).find((d) => d.indicator === indicator) ?? null;
  const frozen = run.params.empiricalBayes?.find((d) => d.indicator === indicator) ?? null;
  const rate = frozen ?? declared;
  const empty: MapRates = { period, rate: null, overallRate: null, regions: {}, problem: null };
  if (!rate) return empty;
  const spec = { events: rate.events, population: rate.population, multiplier: rate.multiplier };
  let matrix;
  try {
    matrix = await loadPanelMatrix(run.params.panelVersionId, { indicators: [rate.events, rate.population], periods: [period] });
  } catch {
    return { ...empty, rate: spec, problem: `The run's panel version has no indicator "${rate.events}" or "${rate.population}", which the rate divides.` };
  }
  const geometry = await geometryFor(run.params);
  const rateInputs = {
    eventValues: matrix.values.get(rate.events)?.get(period) ?? new Map<string, number | null>(),
    populationValues: matrix.values.get(rate.population)?.get(period) ?? new Map<string, number | null>(),
  };
  const regions: Record<string, RegionRates | null> = Object.fromEntries(geometry.baseWeights.ids.map((id) => [id, null]));
  try {
    const prepared = prepareAnalysis(geometry.baseWeights, rateValuesOf(geometry.baseWeights.ids, rateInputs), {
      islandPolicy: run.params.islandPolicy === "attach" ? "attach" : "keep",
      transform: "binary",
      points: geometry.points,
    });
    const events = prepared.ids.map((id) => rateInputs.eventValues.get(id) as number);
    const populations = prepared.ids.map((id) => rateInputs.populationValues.get(id) as number);
    const global = globalEmpiricalBayesRates(events, populations);
    const local = localEmpiricalBayesRates(events, populations, prepared.weights);
    const k = rate.multiplier;
    prepared.ids.forEach((id, i) => {
      regions[id] = {
        events: events[i],
        population: populations[i],
        raw: global.raw[i] * k,
        global: global.smoothed[i] * k,
        local: local.smoothed[i] * k,
        neighbourhood: local.neighbourhoodSizes[i],
      };
    });
    return { period, rate: spec, overallRate: global.globalRate * k, regions, problem: null };
  } catch (error) {
    return { ...empty, rate: spec, regions, problem: `The rate layers could not be computed in ${period}: ${error instanceof Error ? error.message : String(error)}` };
  }
}
