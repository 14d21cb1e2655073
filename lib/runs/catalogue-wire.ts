/**
 * The catalogue's answer on the wire. A 10,000-row catalogue as an array of
 * objects repeats 19 key names and each indicator's label on every row (about
 * 4 MB); as field-ordered tuples with the labels once per indicator it is a
 * little over half that. PostgreSQL writes each tuple as JSON text, and
 * `catalogueAnswerText` only joins them: at 10,000 rows, parsing 170,000
 * values into objects and serialising them again cost more than the query.
 * The screen and the CSV export turn tuples back into `CatalogueRow`s with
 * `catalogueRowsOf`.
 */
import { reachabilityWarning } from "./reachability";
import type { ResolvedRunParams } from "./schemas";
import type { ModelSuggestionWord, SignificanceClass } from "./types";

export const CATALOGUE_FORMAT = "tessera-catalogue/1";

/** Field names of each tuple, in order. The SQL in lib/runs/queries selects the same columns in the same order. */
export const CATALOGUE_FIELDS = [
  "runId",
  "indicator",
  "period",
  "periodIndex",
  "status",
  "note",
  "n",
  "I",
  "expectedI",
  "z",
  "p",
  "pseudoP",
  "adjustedP",
  "significance",
  "deltaI",
  "gearyC",
  "generalG",
  "localTests",
  "residualI",
  "residualP",
  "modelSuggestion",
] as const;

export type CatalogueTuple = [
  runId: number,
  indicator: string,
  period: string,
  periodIndex: number,
  status: "computed" | "not-computed",
  note: string | null,
  n: number,
  I: number | null,
  expectedI: number | null,
  z: number | null,
  p: number | null,
  pseudoP: number | null,
  adjustedP: number | null,
  significance: SignificanceClass | null,
  deltaI: number | null,
  gearyC: number | null,
  generalG: number | null,
  /** Local tests of the period (regions with neighbours), null without local statistics. */
  localTests: number | null,
  /** Moran's I of the residuals of the regression on the run's covariates; null without covariates or when not fitted. */
  residualI: number | null,
  /** Its two-sided p (normal approximation under the regression null). */
  residualP: number | null,
  modelSuggestion: ModelSuggestionWord | null,
];

export interface CatalogueIndicator {
  code: string;
  label: string;
  unit: string | null;
}

/**
 * What a run's rows need to say whether significance was reachable: once per
 * run rather than on every tuple. `globalTests` is the family of the run-wide
 * correction (its computed indicator-periods).
 */
export interface CatalogueRun {
  id: number;
  permutations: number;
  alpha: number;
  correction: ResolvedRunParams["correction"];
  sequentialExtremes: number | null;
  globalTests: number;
}

export interface CatalogueAnswer {
  format: typeof CATALOGUE_FORMAT;
  fields: typeof CATALOGUE_FIELDS;
  runs: CatalogueRun[];
  /**
   * Label and unit of every indicator that has a row. A list rather than an
   * object keyed by code, because codes are users' text and a code such as
   * "__proto__" must not become an object's prototype on either side.
   */
  indicators: CatalogueIndicator[];
  rows: CatalogueTuple[];
}

export interface CatalogueRow {
  runId: number;
  indicator: string;
  indicatorLabel: string;
  unit: string | null;
  period: string;
  periodIndex: number;
  status: "computed" | "not-computed";
  note: string | null;
  n: number;
  I: number | null;
  expectedI: number | null;
  z: number | null;
  p: number | null;
  pseudoP: number | null;
  adjustedP: number | null;
  significance: SignificanceClass | null;
  deltaI: number | null;
  gearyC: number | null;
  generalG: number | null;
  localTests: number | null;
  residualI: number | null;
  residualP: number | null;
  modelSuggestion: ModelSuggestionWord | null;
  /**
   * Short notes, null when significance was reachable: the run's class over
   * its indicator-periods, and the period's local clusters over its regions.
   */
  classReachability: string | null;
  clusterReachability: string | null;
}

/**
 * Rows as objects. An indicator missing from `indicators` (deleted since the
 * run) is labelled with its code, as the grid has always shown it.
 */
export function catalogueRowsOf(answer: Pick<CatalogueAnswer, "indicators" | "rows"> & Partial<Pick<CatalogueAnswer, "runs">>): CatalogueRow[] {
  const byCode = new Map(answer.indicators.map((i) => [i.code, i]));
  const runs = new Map((answer.runs ?? []).map((r) => [r.id, r]));
  // Rows of one run share their notes (the local one per number of regions), so each is worded once.
  const notes = new Map<string, string | null>();
  const noteOf = (runId: number, scope: "local" | "global", tests: number | null): string | null => {
    const run = runs.get(runId);
    if (!run || tests === null) return null;
    const key = `${runId}|${scope}|${tests}`;
    if (!notes.has(key)) {
      const warning = reachabilityWarning({ scope, tests, permutations: run.permutations, alpha: run.alpha, correction: run.correction, sequential: run.sequentialExtremes !== null });
      notes.set(key, warning?.note ?? null);
    }
    return notes.get(key) ?? null;
  };
  return answer.rows.map(([runId, indicator, period, periodIndex, status, note, n, I, expectedI, z, p, pseudoP, adjustedP, significance, deltaI, gearyC, generalG, localTests, residualI, residualP, modelSuggestion]) => {
    const meta = byCode.get(indicator);
    const computed = status === "computed";
    return {
      runId,
      indicator,
      indicatorLabel: meta?.label ?? indicator,
      unit: meta?.unit ?? null,
      period,
      periodIndex,
      status,
      note,
      n,
      I,
      expectedI,
      z,
      p,
      pseudoP,
      adjustedP,
      significance,
      deltaI,
      gearyC,
      generalG,
      localTests,
      residualI,
      residualP,
      modelSuggestion,
      classReachability: computed ? noteOf(runId, "global", runs.get(runId)?.globalTests ?? null) : null,
      clusterReachability: computed ? noteOf(runId, "local", localTests) : null,
    };
  });
}

/**
 * The answer's JSON text from each tuple's own JSON text (as PostgreSQL's
 * json_build_array writes it, in CATALOGUE_FIELDS order). The tuples are
 * trusted to be JSON: they come from the database, never from a request.
 */
export function catalogueAnswerText(indicators: readonly CatalogueIndicator[], tupleTexts: readonly string[], runs: readonly CatalogueRun[] = []): string {
  const head = `{"format":${JSON.stringify(CATALOGUE_FORMAT)},"fields":${JSON.stringify(CATALOGUE_FIELDS)},"runs":${JSON.stringify(runs)},"indicators":${JSON.stringify(indicators)},"rows":[`;
  return `${head}${tupleTexts.join(",")}]}`;
}
