// The cautions of docs/statistics.md: shown beside every result (components/ui/cautions.tsx) and
// printed under every downloaded figure (lib/runs/figures.ts). Plain data, so lib code can use them.

export type CautionKey =
  | "causation"
  | "maup"
  | "multiple"
  | "small-n"
  | "small-rates"
  | "ols-assumptions"
  | "collinear-covariates"
  | "few-regions-covariates"
  | "suggests-not-fits"
  | "areal-weighting";

/** Shown beside results of harmonised panel versions (the harmonise form, a harmonised version, the timeline of a run on one). */
export const AREAL_WEIGHTING_CAUTION =
  "Areal weighting assumes that values are spread evenly within each old region. Where people or firms cluster, shares by area misplace them; a population-weighted crosswalk (for example from the statistics office) is better where one exists.";

export const CAUTIONS: Record<CautionKey, { title: string; body: string }> = {
  causation: {
    title: "Significance is not causation",
    body: "A significant cluster says neighbouring regions have similar values, not why.",
  },
  maup: {
    title: "Units and weights matter",
    body: "Results depend on the regional units and their boundaries (the modifiable areal unit problem) and on the spatial weights chosen.",
  },
  multiple: {
    title: "Many tests, some false alarms",
    body: "Testing many indicator-periods at once produces false positives unless a correction (Bonferroni or false discovery rate) is applied.",
  },
  "small-n": {
    title: "Few regions",
    body: "With small n, analytical p-values are unreliable; prefer the permutation p-value.",
  },
  "small-rates": {
    title: "Rates on small populations",
    body: "Rates on small bases are noisy, and the noise of small regions can dominate Moran's I. A run can standardise declared rates by their population (EB-standardised, empirical Bayes), and the region map shows raw, global and local empirical-Bayes rates side by side; results on raw rates still deserve care.",
  },
  "ols-assumptions": {
    title: "The regression assumes more than it shows",
    body: "Least squares takes each covariate's effect to be straight-line and the errors to be independent with equal spread. Independence is exactly what the residual diagnostics put in question: when they are significant, the standard errors and p-values of the coefficients are too optimistic.",
  },
  "collinear-covariates": {
    title: "Covariates that move together",
    body: "When one covariate is (nearly) a combination of the others, their separate effects cannot be told apart. An exact case is refused for the period and the covariates are named; a near case fits, but with large standard errors.",
  },
  "few-regions-covariates": {
    title: "Few regions per covariate",
    body: "Every covariate uses up a region's worth of information. With few regions left over, the fit flatters (compare R² with adjusted R²) and the residual tests have little power.",
  },
  "suggests-not-fits": {
    title: "A suggestion, not a fitted model",
    body: "The Lagrange multiplier tests point to a spatial lag or a spatial error model; Tessera does not fit either. The coefficients shown are the ordinary least squares ones.",
  },
  "areal-weighting": {
    title: "Carried across a boundary reform",
    body: AREAL_WEIGHTING_CAUTION,
  },
};

/** The cautions shown beside every result unless a screen narrows them. */
export const DEFAULT_CAUTIONS: CautionKey[] = ["causation", "maup", "multiple", "small-n", "small-rates"];

/** The cautions beside a regression on covariates and its residual diagnostics. */
export const REGRESSION_CAUTIONS: CautionKey[] = ["ols-assumptions", "collinear-covariates", "few-regions-covariates", "suggests-not-fits"];

/** "Title. Body": one caution as a line of text (figures, plain-text places). */
export function cautionLine(key: CautionKey): string {
  return `${CAUTIONS[key].title}. ${CAUTIONS[key].body}`;
}
