/**
 * The computation of a run, pure: no database, no queue. The worker, the demo
 * script and the benchmarks all call these functions, so a number on the
 * screen is the number this file produced.
 *
 * Randomness: every period restarts its generators from the run's seed. The
 * three global statistics (Moran's I, Geary's C, General G) share one
 * permutation test drawn from `seed` itself (`globalStatistics`: one shuffle
 * per draw, the same relabellings for all three, so each equals the CLI's
 * moran / geary / getis-ord with --seed S); local Moran draws from a seed
 * derived from it. The permutation draws are therefore the same for every
 * period in which the same regions have a value (common random numbers,
 * docs/statistics.md; they depend on the seed and the count of regions), and an
 * indicator's numbers do not depend on which other indicators the run
 * includes.
 */
import type { Topology } from "topojson-specification";
import {
  createRandomSource,
  empiricalBayesStandardise,
  globalStatistics,
  localGetisOrd,
  localMoran,
  parseWeightsSpecification,
  prepareAnalysis,
  regionCentroids,
  weightsFromTopology,
  type ClusterClass,
  type GlobalStatisticsResult,
  type PreparedAnalysis,
  type RegionPoints,
  type RegionValues,
  type SpatialWeights,
  regressionDiagnostics,
  SingularDesignError,
  TooFewRegionsError,
} from "@/lib/spatial";
import type { ResolvedRunParams } from "./schemas";
import { classifyGiStar } from "./significance";
import type {
  ExclusionSummary,
  GearyFields,
  GeneralGFields,
  GiStarClass,
  GiStarFields,
  LocalFields,
  MoranFields,
  NotComputedReason,
  PeriodResult,
  PermutationFields,
  RegressionFields,
  StoredLagrangeTest,
  WeightsUsed,
} from "./types";

/** The boundaries a run needs: base (untransformed) weights and, for the "attach" policy, centroids. */
export interface RunGeometry {
  readonly baseWeights: SpatialWeights;
  readonly points?: RegionPoints;
}

/** Where the regions are inside a boundary topology. */
export interface TopologyLayout {
  readonly object: string;
  readonly idProperty: string;
}

/**
 * Builds the base weights of a run from a boundary topology.
 *
 * @throws Error naming the rule and the boundary object when the weights cannot be built.
 */
export function buildRunGeometry(
  topology: Topology,
  layout: TopologyLayout,
  params: Pick<ResolvedRunParams, "weights" | "islandPolicy">,
): RunGeometry {
  try {
    const baseWeights = weightsFromTopology(topology, params.weights, { object: layout.object, idProperty: layout.idProperty });
    const points = params.islandPolicy === "attach" ? regionCentroids(topology, { object: layout.object, idProperty: layout.idProperty }) : undefined;
    return { baseWeights, points };
  } catch (error) {
    throw new Error(
      `Could not build "${params.weights}" weights from boundary object "${layout.object}" (id property "${layout.idProperty}"): ${messageOf(error)}`,
    );
  }
}

/**
 * Seed of each permutation test's generator, derived from the run's seed:
 * "moran" is the global test (Moran's I, and with it Geary's C and General G),
 * "local" local Moran's.
 */
export function statisticSeed(seed: number, statistic: "moran" | "local"): number {
  // Keep the run's seed for the global test (so the CLI with --seed S
  // reproduces it); spread the local one with a large odd constant, staying a
  // 31-bit integer. (Salts 1 and 2 were Geary's and General G's own seeds
  // before they shared the global test.)
  return statistic === "moran" ? seed : (seed + 3 * 0x3c6ef35f) % 2_147_483_647;
}

/** Minimum number of regions with a value for the global statistics (their variances divide by n − 3). */
export const MINIMUM_REGIONS = 4;

export type PeriodParams = Pick<
  ResolvedRunParams,
  "weights" | "transform" | "islandPolicy" | "permutations" | "seed" | "alpha" | "correction" | "local" | "sequentialExtremes"
>;

/**
 * The inputs of a rate indicator in one period, for runs that standardise
 * rates (params.empiricalBayes): its events and population per region.
 */
export interface RateInputs {
  readonly events: string;
  readonly population: string;
  readonly eventValues: RegionValues;
  readonly populationValues: RegionValues;
}

/**
 * Raw rates events / population per region of the weights, null where either
 * is missing, the events are negative or the population is not positive (such
 * regions are left out and counted as missing, like a missing value).
 */
export function rateValuesOf(ids: readonly string[], rate: Pick<RateInputs, "eventValues" | "populationValues">): Map<string, number | null> {
  const out = new Map<string, number | null>();
  ids.forEach((id, index) => {
    const o = valueAt(rate.eventValues, id, index);
    const p = valueAt(rate.populationValues, id, index);
    out.set(id, o !== null && p !== null && o >= 0 && p > 0 ? o / p : null);
  });
  return out;
}

function valueAt(values: RegionValues, id: string, index: number): number | null {
  const v =
    values instanceof Map
      ? values.get(id)
      : Array.isArray(values) || ArrayBuffer.isView(values)
        ? (values as ArrayLike<number | null | undefined>)[index]
        : (values as Readonly<Record<string, number | null | undefined>>)[id];
  return typeof v === "number" && Number.isFinite(v) ? v : null;
}

/**
 * Empirical-Bayes standardisation (Assunção & Reis 1999; lib/spatial
 * empiricalBayesStandardise) of the regions an analysis kept: the prepared
 * values become z_i = (r_i − b) / sqrt(a + b / P_i) from the events and
 * population of the same regions, so Moran's I of the result is
 * empiricalBayesMoran's I on the same regions and weights.
 */
export function standardisePrepared(prepared: PreparedAnalysis, rate: RateInputs): { prepared: PreparedAnalysis; globalRate: number; betweenVariance: number } {
  const events = prepared.ids.map((id, i) => valueAt(rate.eventValues, id, i) ?? Number.NaN);
  const populations = prepared.ids.map((id, i) => valueAt(rate.populationValues, id, i) ?? Number.NaN);
  const eb = empiricalBayesStandardise(events, populations);
  return { prepared: { ...prepared, values: eb.standardised }, globalRate: eb.globalRate, betweenVariance: eb.betweenVariance };
}

/**
 * All statistics of one indicator-period. Never throws for bad data: a
 * constant indicator, too few regions, no links or an engine error give a
 * row with status "not-computed" and a note saying why.
 *
 * With `rate` (a run that standardises rates), the values analysed are the
 * empirical-Bayes standardised rates of `rate`'s events and population
 * instead of `values`: global Moran's I with its permutation test, Geary's C,
 * local Moran and local Gi* are computed on them; General G is not (the
 * standardised values are signed).
 */
export function computePeriod(
  geometry: RunGeometry,
  params: PeriodParams,
  indicator: string,
  period: string,
  values: RegionValues,
  extras: { readonly rate?: RateInputs; readonly covariates?: readonly CovariateValues[] } = {},
): Omit<PeriodResult, "deltaI"> {
  // The regression on the covariates stands on its own (its own regions, the published values, its own messages); only runs with covariates carry the key.
  const covariates = extras.covariates ?? [];
  const regression = covariates.length ? { regression: computeRegression(geometry, params, period, values, covariates) } : {};
  return { ...computeStatistics(geometry, params, indicator, period, values, extras.rate), ...regression };
}

function computeStatistics(
  geometry: RunGeometry,
  params: PeriodParams,
  indicator: string,
  period: string,
  values: RegionValues,
  rate?: RateInputs,
): Omit<PeriodResult, "deltaI"> {
  const notes: string[] = [];
  const base = { indicator, period };
  let prepared: PreparedAnalysis;
  try {
    prepared = prepareAnalysis(geometry.baseWeights, rate ? rateValuesOf(geometry.baseWeights.ids, rate) : values, {
      islandPolicy: params.islandPolicy,
      transform: params.transform,
      points: geometry.points,
    });
  } catch (error) {
    return notComputed(base, "error", `The data could not be aligned with the weights: ${messageOf(error)}`, 0, emptyExclusions(geometry), null);
  }
  const { report } = prepared;
  const exclusions: ExclusionSummary = {
    regionsInBoundaries: report.regionsInWeights,
    missing: report.droppedCounts.missing,
    notANumber: report.droppedCounts["not-a-number"],
    islandExcluded: report.droppedCounts["island-excluded"],
    regions: report.dropped.map((d) => ({ id: d.id, reason: d.reason })),
  };
  const n = report.regionsUsed;
  const missing = exclusions.missing + exclusions.notANumber;
  if (missing > 0) {
    notes.push(
      `${plural(missing, "region")} without a usable value ${missing === 1 ? "is" : "are"} left out; the weights are restricted to the ${report.regionsInWeights - missing} regions with a value` +
        (params.transform === "row-standardised" ? " and re-standardised." : "."),
    );
  }
  if (report.islands.length > 0) notes.push(islandSentence(report.islands, params.weights, params.islandPolicy, report.attached.length));
  const weights = weightsUsed(prepared, params);

  if (n < MINIMUM_REGIONS) {
    notes.unshift(
      `Too few regions: ${n} of ${report.regionsInWeights} regions can be used in ${period}, and Moran's I with its variances needs at least ${MINIMUM_REGIONS}.`,
    );
    return notComputed(base, "too-few-regions", notes.join(" "), n, exclusions, weights);
  }
  const constant = constantValue(prepared.values);
  if (constant !== null) {
    notes.unshift(
      `The indicator is constant in ${period}: all ${n} regions have the value ${formatValue(constant)}, so spatial autocorrelation is undefined.`,
    );
    return notComputed(base, "constant", notes.join(" "), n, exclusions, weights);
  }
  if (weights.links === 0) {
    notes.unshift(`No two of the ${n} regions with a value are neighbours under "${params.weights}" weights, so no statistic can be computed.`);
    return notComputed(base, "no-links", notes.join(" "), n, exclusions, weights);
  }
  if (rate) {
    try {
      const eb = standardisePrepared(prepared, rate);
      prepared = eb.prepared;
      notes.unshift(
        `EB-standardised: the ${n} regions' rates ${rate.events} / ${rate.population} were empirical-Bayes standardised (Assunção & Reis 1999) around the overall rate ` +
          `${formatValue(eb.globalRate)} before every statistic; the normality and randomisation p-values treat the standardised values as ordinary data, so read the permutation p-value.`,
      );
    } catch (error) {
      notes.unshift(`The rates could not be empirical-Bayes standardised in ${period}: ${messageOf(error)}`);
      return notComputed(base, "error", notes.join(" "), n, exclusions, weights);
    }
    const standardisedConstant = constantValue(prepared.values);
    if (standardisedConstant !== null) {
      notes.unshift(`The standardised rates are constant in ${period}, so spatial autocorrelation is undefined.`);
      return notComputed(base, "constant", notes.join(" "), n, exclusions, weights);
    }
  }

  let statistics: GlobalStatisticsResult;
  try {
    statistics = globalStatistics(prepared.values, prepared.weights, {
      permutations: params.permutations,
      random: createRandomSource(statisticSeed(params.seed, "moran")),
    });
  } catch (error) {
    notes.unshift(`Moran's I could not be computed: ${messageOf(error)}`);
    return notComputed(base, "error", notes.join(" "), n, exclusions, weights);
  }
  const global = statistics.moran;
  const moran: MoranFields = {
    I: global.I,
    expectedI: global.expectedI,
    kurtosis: global.kurtosis,
    varianceNormality: global.normality.variance,
    varianceRandomisation: global.randomisation.variance,
    zNormality: global.normality.z,
    zRandomisation: global.randomisation.z,
    pNormality: global.normality.pTwoSided,
    pRandomisation: global.randomisation.pTwoSided,
    pRandomisationGreater: global.randomisation.pGreater,
  };
  const permutation: PermutationFields | null = global.permutation
    ? {
        permutations: global.permutation.permutations,
        mean: global.permutation.mean,
        sd: global.permutation.sd,
        z: Number.isFinite(global.permutation.z) ? global.permutation.z : null,
        pGreater: global.permutation.pGreater,
        pLess: global.permutation.pLess,
        pTwoSided: global.permutation.pTwoSided,
        bandLow: global.permutation.band[0],
        bandHigh: global.permutation.band[1],
      }
    : null;

  const geary: GearyFields = {
    C: statistics.geary.C,
    zRandomisation: statistics.geary.randomisation.z,
    pRandomisation: statistics.geary.randomisation.pTwoSided,
    pseudoP: statistics.geary.permutation?.pTwoSided ?? null,
  };

  let generalGFields: GeneralGFields | null = null;
  if (statistics.generalG) {
    generalGFields = {
      G: statistics.generalG.G,
      expectedG: statistics.generalG.expectedG,
      z: statistics.generalG.randomisation.z,
      p: statistics.generalG.randomisation.pTwoSided,
      pseudoP: statistics.generalG.permutation?.pTwoSided ?? null,
    };
  } else if (rate) {
    notes.push("General G was not computed: it needs values of one sign, and standardised rates are negative wherever a region's rate is below the overall rate.");
  } else {
    notes.push(`General G was not computed: ${statistics.generalGProblem ?? "it is undefined for these values."}`);
  }

  let local: LocalFields | null = null;
  let giStar: GiStarFields | null = null;
  if (params.local) {
    try {
      local = computeLocal(prepared, params);
    } catch (error) {
      notes.push(`Local Moran was not computed: ${messageOf(error)}`);
    }
    try {
      giStar = computeGiStar(prepared, params);
    } catch (error) {
      notes.push(`Local Gi* was not computed: ${messageOf(error)}`);
    }
  }

  return {
    ...base,
    status: "computed",
    reason: null,
    note: notes.length ? notes.join(" ") : null,
    n,
    exclusions,
    weights,
    moran,
    permutation,
    geary,
    generalG: generalGFields,
    local,
    giStar,
  };
}

/** One covariate's values in a period, keyed by region code (null = missing). */
export interface CovariateValues {
  readonly code: string;
  readonly values: RegionValues;
}

/**
 * OLS of one indicator-period on the covariates (with an intercept) over the
 * regions that have a value of the indicator and of every covariate, on the
 * run's weights restricted to those regions (and the island policy and
 * transform applied) exactly as for missing values; then Moran's I of the
 * residuals and the Lagrange multiplier tests. Never throws: a singular
 * design or too few regions give fields with only `message` set.
 */
export function computeRegression(
  geometry: RunGeometry,
  params: Pick<PeriodParams, "islandPolicy" | "transform" | "alpha">,
  period: string,
  values: RegionValues,
  covariates: readonly CovariateValues[],
): RegressionFields {
  const codes = covariates.map((c) => c.code);
  const ids = geometry.baseWeights.ids;
  const combined = new Map<string, number | null>();
  let excluded = 0;
  for (let i = 0; i < ids.length; i++) {
    const y = valueAt(values, ids[i], i);
    const all = y !== null && covariates.every((c) => valueAt(c.values, ids[i], i) !== null);
    if (y !== null && !all) excluded++;
    combined.set(ids[i], all ? y : null);
  }
  const failed = (n: number, message: string): RegressionFields => ({
    covariates: codes,
    n,
    excluded,
    message,
    coefficients: null,
    rSquared: null,
    adjustedRSquared: null,
    sigma2: null,
    moran: null,
    lagrange: null,
    suggestion: null,
  });
  let prepared: PreparedAnalysis;
  try {
    prepared = prepareAnalysis(geometry.baseWeights, combined, { islandPolicy: params.islandPolicy, transform: params.transform, points: geometry.points });
  } catch (error) {
    return failed(0, `The regression on ${quoted(codes)} could not be set up in ${period}: ${messageOf(error)}`);
  }
  const n = prepared.ids.length;
  const indexOf = new Map(ids.map((id, i) => [id, i]));
  const design = covariates.map((c) => ({
    name: c.code,
    values: Float64Array.from(prepared.ids, (id) => valueAt(c.values, id, indexOf.get(id) ?? -1) ?? Number.NaN),
  }));
  try {
    const d = regressionDiagnostics(prepared.values, design, prepared.weights, { alpha: params.alpha });
    const test = (t: { statistic: number; df: number; p: number }): StoredLagrangeTest => ({ statistic: finite(t.statistic), df: t.df, p: finite(t.p) });
    return {
      covariates: codes,
      n,
      excluded,
      message: null,
      coefficients: d.fit.coefficients.map((c) => ({ name: c.name, estimate: finite(c.estimate), standardError: finite(c.standardError), t: finite(c.t), p: finite(c.p) })),
      rSquared: finite(d.fit.rSquared),
      adjustedRSquared: finite(d.fit.adjustedRSquared),
      sigma2: finite(d.fit.sigma2),
      moran: {
        I: finite(d.moran.I),
        expectedI: finite(d.moran.expectedI),
        variance: finite(d.moran.variance),
        z: finite(d.moran.z),
        pTwoSided: finite(d.moran.pTwoSided),
        pGreater: finite(d.moran.pGreater),
      },
      lagrange: {
        error: test(d.lagrange.error),
        lag: test(d.lagrange.lag),
        robustError: test(d.lagrange.robustError),
        robustLag: test(d.lagrange.robustLag),
        combined: test(d.lagrange.combined),
      },
      suggestion: d.suggestion,
    };
  } catch (error) {
    if (error instanceof SingularDesignError) {
      const named = error.covariates.length ? error.covariates : codes;
      return failed(
        n,
        `Not fitted in ${period}: collinear covariates (${quoted(named)}) over the ${n} regions with every value. ${error.message} Drop or replace ${named.length === 1 ? "it" : "one of them"}.`,
      );
    }
    if (error instanceof TooFewRegionsError) {
      return failed(
        n,
        `Not fitted in ${period}: ${n} regions have a value of the indicator and of ${quoted(codes)}; an intercept and ${codes.length} covariate(s) need at least ${codes.length + 3}.`,
      );
    }
    return failed(n, `The regression on ${quoted(codes)} could not be computed in ${period}: ${messageOf(error)}`);
  }
}


function finite(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

function quoted(codes: readonly string[]): string {
  return codes.map((c) => `"${c}"`).join(", ");
}

/** Local Moran with conditional permutation, plus the Moran scatter plot coordinates. */
export function computeLocal(
  prepared: PreparedAnalysis,
  params: Pick<PeriodParams, "permutations" | "seed" | "alpha" | "correction" | "sequentialExtremes">,
): LocalFields {
  const sequential = params.sequentialExtremes ?? null;
  const result = localMoran(prepared.values, prepared.weights, {
    permutations: params.permutations,
    random: createRandomSource(statisticSeed(params.seed, "local")),
    alpha: params.alpha,
    correction: params.correction,
    moments: "conditional",
    pValueSource: "permutation",
    sequentialExtremes: sequential,
  });
  const x = prepared.values;
  const n = x.length;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += x[i];
  mean /= n;
  const sd = Math.sqrt(result.m2);
  const standardised: number[] = [];
  const lag: number[] = [];
  let cross = 0;
  let squares = 0;
  const counts: Record<ClusterClass, number> = { HH: 0, LL: 0, HL: 0, LH: 0, "not-significant": 0, "no-neighbours": 0 };
  for (let i = 0; i < n; i++) {
    const s = (x[i] - mean) / sd;
    const l = result.regions[i].lag / sd;
    standardised.push(s);
    lag.push(l);
    cross += s * l;
    squares += s * s;
    counts[result.regions[i].cluster]++;
  }
  return {
    ids: result.regions.map((r) => r.id),
    Ii: result.regions.map((r) => r.Ii),
    z: result.regions.map((r) => r.z),
    pseudoP: result.regions.map((r) => r.pseudoP),
    adjustedP: result.regions.map((r) => r.adjustedP),
    quadrant: result.regions.map((r) => r.quadrant),
    cluster: result.regions.map((r) => r.cluster),
    standardised,
    lag,
    alpha: result.alpha,
    correction: result.correction,
    moments: "conditional",
    slope: cross / squares,
    counts,
    // Only sequential runs carry these, so a fixed-count run stores the same JSON as before the option existed.
    ...(sequential === null
      ? {}
      : {
          sequentialExtremes: sequential,
          permutationsUsed: result.regions.map((r) => r.permutationsUsed),
          stopped: result.regions.filter((r) => r.permutationsUsed !== null && r.permutationsUsed < params.permutations).length,
        }),
  };
}

/**
 * Local Getis–Ord Gi* (region i counted among its own neighbours) on the
 * run's weights, classed under the run's correction and alpha like local
 * Moran's clusters. Its conditional permutation test draws from the local
 * Moran seed, so it uses the very relabellings local Moran used (and the same
 * sequential stopping): for a region with neighbours whose value is not the
 * mean, its pseudo p equals local Moran's (both rank the neighbours' weighted
 * sum with region i fixed); Gi* adds the direction of the whole neighbourhood.
 */
export function computeGiStar(
  prepared: PreparedAnalysis,
  params: Pick<PeriodParams, "permutations" | "seed" | "alpha" | "correction" | "sequentialExtremes">,
): GiStarFields {
  const result = localGetisOrd(prepared.values, prepared.weights, {
    star: true,
    permutations: params.permutations,
    random: createRandomSource(statisticSeed(params.seed, "local")),
    sequentialExtremes: params.sequentialExtremes ?? null,
  });
  const { adjustedP, classes } = classifyGiStar(result.regions, params.alpha, params.correction);
  const counts: Record<GiStarClass, number> = { hot: 0, cold: 0, "not-significant": 0, "no-neighbours": 0 };
  for (const c of classes) counts[c]++;
  return {
    ids: result.regions.map((r) => r.id),
    z: result.regions.map((r) => r.z),
    p: result.regions.map((r) => r.p),
    pseudoP: result.regions.map((r) => r.pseudoP),
    adjustedP,
    classes,
    alpha: params.alpha,
    correction: params.correction,
    pValueSource: "permutation",
    counts,
  };
}

/** One period's values of an indicator, keyed by region code (null = missing). */
export interface IndicatorPeriodValues {
  readonly period: string;
  readonly values: RegionValues;
  /** The rate's events and population in this period, when the run standardises this indicator. */
  readonly rate?: RateInputs;
}

/**
 * Every period of one indicator (one piece of a run), in the order given,
 * with ΔI from the previous period of the list.
 */
export function computeIndicator(
  geometry: RunGeometry,
  params: PeriodParams,
  indicator: string,
  periods: readonly (IndicatorPeriodValues & { readonly covariates?: readonly CovariateValues[] })[],
): PeriodResult[] {
  return withChanges(periods.map(({ period, values, rate, covariates }) => computePeriod(geometry, params, indicator, period, values, { rate, covariates })));
}

/**
 * Adds ΔI = I(this period) − I(previous period) to rows given in period
 * order; null when either I is missing (not computed).
 */
export function withChanges(rows: readonly Omit<PeriodResult, "deltaI">[]): PeriodResult[] {
  let previousI: number | null = null;
  return rows.map((row) => {
    const I = row.moran?.I ?? null;
    const deltaI = I !== null && previousI !== null ? I - previousI : null;
    previousI = I;
    return { ...row, deltaI };
  });
}

// ——— helpers ———

function weightsUsed(prepared: PreparedAnalysis, params: PeriodParams): WeightsUsed {
  const w = prepared.weights;
  const n = w.ids.length;
  let S0 = 0;
  let min = n > 0 ? Infinity : 0;
  let max = 0;
  const rowSums = new Float64Array(n);
  const columnSums = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const k = w.offsets[i + 1] - w.offsets[i];
    if (k < min) min = k;
    if (k > max) max = k;
    for (let p = w.offsets[i]; p < w.offsets[i + 1]; p++) {
      S0 += w.weights[p];
      rowSums[i] += w.weights[p];
      columnSums[w.neighbours[p]] += w.weights[p];
    }
  }
  // S1 via a lookup of the reverse link (rows are sorted, so binary search).
  let S1 = 0;
  for (let i = 0; i < n; i++) {
    for (let p = w.offsets[i]; p < w.offsets[i + 1]; p++) {
      const j = w.neighbours[p];
      const back = reverseWeight(w, j, i);
      const sum = w.weights[p] + back;
      S1 += back > 0 ? 0.5 * sum * sum : sum * sum;
    }
  }
  let S2 = 0;
  for (let i = 0; i < n; i++) S2 += (rowSums[i] + columnSums[i]) ** 2;
  const links = w.neighbours.length;
  return {
    rule: params.weights,
    transform: params.transform,
    islandPolicy: params.islandPolicy,
    restricted: prepared.report.restricted,
    S0,
    S1,
    S2,
    links,
    meanNeighbours: n > 0 ? links / n : 0,
    minNeighbours: min,
    maxNeighbours: max,
    islands: [...prepared.report.islands],
    attached: prepared.report.attached.map((a) => ({ id: a.id, neighbour: a.neighbour })),
  };
}

function reverseWeight(w: SpatialWeights, row: number, column: number): number {
  let lo = w.offsets[row];
  let hi = w.offsets[row + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const c = w.neighbours[mid];
    if (c === column) return w.weights[mid];
    if (c < column) lo = mid + 1;
    else hi = mid - 1;
  }
  return 0;
}

/** The common value when every value is (numerically) the same, else null. */
function constantValue(values: Float64Array): number | null {
  if (values.length === 0) return null;
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    if (v < min) min = v;
    if (v > max) max = v;
  }
  const scale = Math.max(Math.abs(min), Math.abs(max), 1e-300);
  return max - min <= 1e-12 * scale ? values[0] : null;
}

function islandSentence(islands: readonly string[], rule: string, policy: PeriodParams["islandPolicy"], attached: number): string {
  const listed = islands.slice(0, 8).join(", ") + (islands.length > 8 ? ` and ${islands.length - 8} more` : "");
  const subject = `${plural(islands.length, "region")} ${islands.length === 1 ? "has" : "have"} no neighbour with a value under "${rule}" weights (${listed})`;
  if (policy === "exclude") return `${subject}; island policy "exclude": left out, so n is reduced.`;
  if (policy === "keep") return `${subject}; island policy "keep": kept with a spatial lag of zero.`;
  return `${subject}; island policy "attach": ${attached === 1 ? "linked" : "each linked"} to the nearest region by centroid distance.`;
}

function notComputed(
  base: { indicator: string; period: string },
  reason: NotComputedReason,
  note: string,
  n: number,
  exclusions: ExclusionSummary,
  weights: WeightsUsed | null,
): Omit<PeriodResult, "deltaI"> {
  return {
    ...base,
    status: "not-computed",
    reason,
    note,
    n,
    exclusions,
    weights,
    moran: null,
    permutation: null,
    geary: null,
    generalG: null,
    local: null,
    giStar: null,
  };
}

function emptyExclusions(geometry: RunGeometry): ExclusionSummary {
  return { regionsInBoundaries: geometry.baseWeights.ids.length, missing: 0, notANumber: 0, islandExcluded: 0, regions: [] };
}

function plural(count: number, noun: string): string {
  return `${count} ${noun}${count === 1 ? "" : "s"}`;
}

function formatValue(v: number): string {
  return Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(6)));
}

export function messageOf(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

/** True when the weights rule is a distance rule (needs centroids, slower to build). */
export function isDistanceRule(rule: string): boolean {
  const kind = parseWeightsSpecification(rule).kind;
  return kind !== "queen" && kind !== "rook";
}
