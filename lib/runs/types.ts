import type { ClusterClass, Correction, DropReason, IslandPolicy, Quadrant, WeightsTransform } from "@/lib/spatial";

// Shapes of the results of a run, one per indicator × period. Plain JSON:
// they are stored (runs tables) and sent to the client as they are.

/** The class of a global result after the run's multiple-testing correction. */
export type SignificanceClass = "clustering" | "dispersion" | "not-significant";

export const SIGNIFICANCE_LABELS: Record<SignificanceClass, string> = {
  clustering: "Significant clustering",
  dispersion: "Significant dispersion",
  "not-significant": "Not significant",
};

/** Whether the statistics could be computed for the period. */
export type ResultStatus = "computed" | "not-computed";

/** Why a row was not computed (the note says it in words). */
export type NotComputedReason = "too-few-regions" | "constant" | "no-links" | "error";

export interface ExclusionSummary {
  readonly regionsInBoundaries: number;
  readonly missing: number;
  readonly notANumber: number;
  readonly islandExcluded: number;
  /** Every excluded region with its reason (weights order). */
  readonly regions: readonly { readonly id: string; readonly reason: DropReason }[];
}

export interface WeightsUsed {
  readonly rule: string;
  readonly transform: WeightsTransform;
  readonly islandPolicy: IslandPolicy;
  /** True when regions without a value were removed and W re-standardised. */
  readonly restricted: boolean;
  readonly S0: number;
  readonly S1: number;
  readonly S2: number;
  readonly links: number;
  readonly meanNeighbours: number;
  readonly minNeighbours: number;
  readonly maxNeighbours: number;
  /** Regions without neighbours among the regions with a value (before the policy). */
  readonly islands: readonly string[];
  /** Under "attach": island → the region it was linked to. */
  readonly attached: readonly { readonly id: string; readonly neighbour: string }[];
}

export interface MoranFields {
  readonly I: number;
  readonly expectedI: number;
  readonly kurtosis: number;
  readonly varianceNormality: number;
  readonly varianceRandomisation: number;
  readonly zNormality: number;
  readonly zRandomisation: number;
  /** Two-sided normal p under normality. */
  readonly pNormality: number;
  /** Two-sided normal p under randomisation. */
  readonly pRandomisation: number;
  /** One-sided (greater) normal p under randomisation. */
  readonly pRandomisationGreater: number;
}

export interface PermutationFields {
  readonly permutations: number;
  readonly mean: number;
  readonly sd: number;
  readonly z: number | null;
  readonly pGreater: number;
  readonly pLess: number;
  /** min(1, 2·min(pGreater, pLess)) — the pseudo p shown by default. */
  readonly pTwoSided: number;
  /** 2.5 % and 97.5 % quantiles of I under the null (the band of the timeline). */
  readonly bandLow: number;
  readonly bandHigh: number;
}

export interface GearyFields {
  readonly C: number;
  readonly zRandomisation: number;
  readonly pRandomisation: number;
  readonly pseudoP: number | null;
}

export interface GeneralGFields {
  readonly G: number;
  readonly expectedG: number;
  readonly z: number;
  readonly p: number;
  readonly pseudoP: number | null;
}

/**
 * Local Moran results of one indicator-period, stored column-wise (arrays
 * aligned with `ids`) to keep the stored row small.
 */
export interface LocalFields {
  readonly ids: string[];
  readonly Ii: number[];
  /** z of I_i under conditional randomisation (null when undefined). */
  readonly z: (number | null)[];
  /** Two-sided conditional permutation pseudo p. */
  readonly pseudoP: (number | null)[];
  /** pseudo p after the correction across the regions of this period. */
  readonly adjustedP: (number | null)[];
  readonly quadrant: Quadrant[];
  readonly cluster: ClusterClass[];
  /** Standardised value (x − x̄)/s, s² = Σz²/n: the Moran scatter plot's horizontal axis. */
  readonly standardised: number[];
  /** Spatial lag of the standardised value: the scatter plot's vertical axis. */
  readonly lag: number[];
  readonly alpha: number;
  readonly correction: Correction;
  readonly moments: "conditional";
  /** Slope of the scatter plot (= I for row-standardised weights without islands). */
  readonly slope: number;
  /** Counts per cluster class. */
  readonly counts: Record<ClusterClass, number>;
  /**
   * Present only when the run used sequential p-values (Besag & Clifford
   * 1991): h, the permutations each region drew (R unless it stopped early;
   * null without neighbours) and how many regions stopped early.
   */
  readonly sequentialExtremes?: number;
  readonly permutationsUsed?: (number | null)[];
  readonly stopped?: number;
}

/**
 * The class of a region under local Getis–Ord Gi*: its neighbourhood (itself
 * included) significantly high ("hot") or low ("cold") after the run's
 * correction, not significant, or without neighbours (no test).
 */
export type GiStarClass = "hot" | "cold" | "not-significant" | "no-neighbours";

/**
 * Local Getis–Ord Gi* of one indicator-period, stored column-wise like
 * {@link LocalFields} (arrays aligned with `ids`, the same regions in the same
 * order). Absent (null) for runs from before Gi* was stored and for runs
 * without local results.
 */
export interface GiStarFields {
  readonly ids: string[];
  /** Standardised Gi* (Ord & Getis 1995); null without neighbours. */
  readonly z: (number | null)[];
  /** Two-sided normal p of z (analytical). */
  readonly p: (number | null)[];
  /** Two-sided conditional permutation pseudo p, drawn with the same relabellings as local Moran's. */
  readonly pseudoP: (number | null)[];
  /** pseudo p after the run's correction across the regions of this period. */
  readonly adjustedP: (number | null)[];
  readonly classes: GiStarClass[];
  readonly alpha: number;
  readonly correction: Correction;
  /** Which p decided the classes (always the permutation p in runs). */
  readonly pValueSource: "permutation";
  readonly counts: Record<GiStarClass, number>;
}

/** One indicator × period of a run, as computed by a piece (before run-wide correction). */
export interface PeriodResult {
  readonly indicator: string;
  readonly period: string;
  readonly status: ResultStatus;
  readonly reason: NotComputedReason | null;
  /** Plain sentences: why a row was not computed, and anything else done to the data. */
  readonly note: string | null;
  readonly n: number;
  readonly exclusions: ExclusionSummary;
  readonly weights: WeightsUsed | null;
  readonly moran: MoranFields | null;
  readonly permutation: PermutationFields | null;
  readonly geary: GearyFields | null;
  readonly generalG: GeneralGFields | null;
  readonly local: LocalFields | null;
  /** Local Gi* (computed whenever local results are; null otherwise). */
  readonly giStar: GiStarFields | null;
  /** OLS on the run's covariates and its residual diagnostics; null (or absent) when the run controls for nothing or this indicator is a covariate. */
  readonly regression?: RegressionFields | null;
  /** I of this period minus I of the previous period of the run (null when either is missing). */
  readonly deltaI: number | null;
}

/** The p-value that decides the significance class of a row. */
export type DecidingPSource = "permutation" | "randomisation";

/** Run-wide significance of one row (filled when the last piece finishes). */
export interface RowSignificance {
  readonly decidingP: number | null;
  readonly adjustedP: number | null;
  readonly significance: SignificanceClass | null;
}

/** The model the Lagrange multiplier tests point to (lib/spatial/regression suggestModel). */
export type ModelSuggestionWord = "error" | "lag" | "both" | "neither";

export const MODEL_SUGGESTION_LABELS: Record<ModelSuggestionWord, string> = {
  error: "spatial error",
  lag: "spatial lag",
  both: "both (lag and error)",
  neither: "neither",
};

/** One Lagrange multiplier test as stored (statistic, degrees of freedom, p). */
export interface StoredLagrangeTest {
  readonly statistic: number | null;
  readonly df: number;
  readonly p: number | null;
}

/**
 * The regression of one indicator-period on the run's covariates ("control
 * for") and the spatial diagnostics of its residuals. Stored as one jsonb
 * value (run_results.regression); null for runs without covariates and for
 * the covariates' own rows. When the regression could not be fitted (a
 * singular design, too few regions) only `covariates`, `n`, `excluded` and
 * `message` are set.
 */
export interface RegressionFields {
  /** The covariates, in the run's order. */
  readonly covariates: readonly string[];
  /** Regions in the regression (a value of the indicator and of every covariate, after the island policy). */
  readonly n: number;
  /** Regions with a value of the indicator left out because a covariate has none. */
  readonly excluded: number;
  /** Why the regression was not fitted in this period (names the covariates); null when it was. */
  readonly message: string | null;
  readonly coefficients: readonly { name: string; estimate: number | null; standardError: number | null; t: number | null; p: number | null }[] | null;
  readonly rSquared: number | null;
  readonly adjustedRSquared: number | null;
  readonly sigma2: number | null;
  /** Moran's I of the OLS residuals, with its moments under the regression null (normal approximation). */
  readonly moran: {
    readonly I: number | null;
    readonly expectedI: number | null;
    readonly variance: number | null;
    readonly z: number | null;
    readonly pTwoSided: number | null;
    readonly pGreater: number | null;
  } | null;
  readonly lagrange: {
    readonly error: StoredLagrangeTest;
    readonly lag: StoredLagrangeTest;
    readonly robustError: StoredLagrangeTest;
    readonly robustLag: StoredLagrangeTest;
    readonly combined: StoredLagrangeTest;
  } | null;
  readonly suggestion: ModelSuggestionWord | null;
}
