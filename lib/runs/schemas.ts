import { z } from "zod";
import { idText, PG_INT4_MAX, text } from "@/lib/http/params";
import { parseWeightsSpecification } from "@/lib/spatial";

// Parameters of a run, shared by the start form, the route handler, the job
// payloads and the stored `runs.params`. A run's stored parameters are the
// resolved form: seed chosen, indicators and periods listed explicitly, so a
// rerun with the same stored parameters reproduces every number.

/** Weights rules offered in the start form; any rule the engine parses is accepted. */
export const WEIGHTS_CHOICES = [
  { value: "queen", label: "Queen contiguity (shared corner or edge)" },
  { value: "rook", label: "Rook contiguity (shared edge)" },
  { value: "knn:4", label: "4 nearest neighbours" },
  { value: "knn:6", label: "6 nearest neighbours" },
  { value: "knn:8", label: "8 nearest neighbours" },
  { value: "band", label: "Distance band (smallest that connects every region)" },
] as const;

export const TRANSFORMS = ["row-standardised", "binary"] as const;

/** Most permutations a run may use (the start form and the stored parameters). */
export const MAX_RUN_PERMUTATIONS = 99_999;
export const ISLAND_POLICIES = ["exclude", "keep", "attach"] as const;
/** How a run treats indicators declared as rates (events / population). */
export const RATE_TREATMENTS = ["raw", "empirical-bayes"] as const;
export type RateTreatment = (typeof RATE_TREATMENTS)[number];

export const CORRECTIONS = ["none", "bonferroni", "fdr"] as const;

export const CORRECTION_LABELS: Record<(typeof CORRECTIONS)[number], string> = {
  none: "no correction",
  bonferroni: "Bonferroni",
  fdr: "false discovery rate (Benjamini–Hochberg)",
};

export const ISLAND_POLICY_LABELS: Record<(typeof ISLAND_POLICIES)[number], string> = {
  exclude: "exclude regions without neighbours",
  keep: "keep them with a zero lag",
  attach: "attach each to its nearest region",
};

const weightsRule = z
  .string()
  .trim()
  .min(1, "Choose a weights rule.")
  .max(40)
  .superRefine((value, ctx) => {
    try {
      const spec = parseWeightsSpecification(value);
      if (spec.kind === "idw") ctx.addIssue({ code: "custom", message: "Inverse-distance weights are not offered for runs yet; use queen, rook, knn:K or band." });
    } catch (error) {
      ctx.addIssue({ code: "custom", message: error instanceof Error ? error.message : String(error) });
    }
  });

const code = text({ min: 1, max: 120 });

/** Most covariates a run may control for. */
export const MAX_CONTROL_FOR = 10;

const controlForSchema = z
  .array(text({ min: 1, max: 120 }), { message: "controlFor must be a list of indicator codes." })
  .max(MAX_CONTROL_FOR, `Control for at most ${MAX_CONTROL_FOR} indicators.`)
  .superRefine((codes, ctx) => {
    const seen = new Set<string>();
    for (const [i, c] of codes.entries()) {
      if (seen.has(c)) ctx.addIssue({ code: "custom", path: [i], message: `controlFor names indicator "${c}" twice.` });
      seen.add(c);
    }
  });

/** What a user chooses (start form, API body). */
export const runParamsInputSchema = z.object({
  weights: weightsRule.default("queen"),
  transform: z.enum(TRANSFORMS).default("row-standardised"),
  islandPolicy: z.enum(ISLAND_POLICIES).default("exclude"),
  permutations: z.coerce
    .number()
    .int("Permutations must be a whole number.")
    .min(99, "Use at least 99 permutations.")
    .max(MAX_RUN_PERMUTATIONS, "Use at most 99,999 permutations.")
    .default(999),
  seed: z.coerce.number().int("The seed must be a whole number.").min(0, "The seed must be 0 or more.").max(2_147_483_647).optional(),
  alpha: z.coerce.number().gt(0, "Alpha must be above 0.").max(0.2, "Alpha above 0.2 is not offered.").default(0.05),
  correction: z.enum(CORRECTIONS).default("fdr"),
  /** Empty or absent = every indicator of the panel version. */
  indicators: z.array(code).max(500).optional(),
  /** Empty or absent = every period of the panel version. */
  periods: z.array(code).max(500).optional(),
  /** Local Moran and local Gi* per region (the map's two local views). Off makes very large runs faster. */
  local: z.boolean().default(true),
  /**
   * Sequential Monte Carlo p-values for the local statistics (Besag & Clifford
   * 1991): a region stops drawing once SEQUENTIAL_EXTREMES permuted values in
   * each tail are as extreme as its own. Off by default.
   */
  sequential: z.boolean().default(false),
  /**
   * Other indicators of the same panel version to control for: each analysed
   * indicator is also regressed on them (OLS with an intercept) and the
   * spatial dependence left in the residuals is tested. Empty or absent =
   * none.
   */
  controlFor: controlForSchema.optional(),
  /**
   * "empirical-bayes": Moran's I (global and local) of every declared rate
   * indicator of the run is computed on empirical-Bayes standardised rates
   * (Assunção & Reis 1999) from the rate's events and population; other
   * indicators are computed as before. Raw by default.
   */
  rates: z.enum(RATE_TREATMENTS).default("raw"),
});
export type RunParamsInput = z.input<typeof runParamsInputSchema>;
export type RunParamsChoice = z.output<typeof runParamsInputSchema>;

/** The body of POST /api/w/[slug]/runs. */
export const startRunSchema = runParamsInputSchema.extend({
  panelVersionId: z.coerce.number().int("Choose a published panel version.").min(1, "Choose a published panel version.").max(PG_INT4_MAX, "Choose a published panel version."),
});
export type StartRunInput = z.input<typeof startRunSchema>;

/** The stored, fully resolved parameters of a run. */
export const resolvedRunParamsSchema = z.object({
  weights: weightsRule,
  transform: z.enum(TRANSFORMS),
  islandPolicy: z.enum(ISLAND_POLICIES),
  permutations: z.number().int().min(99).max(MAX_RUN_PERMUTATIONS),
  seed: z.number().int().min(0).max(2_147_483_647),
  alpha: z.number().gt(0).max(0.2),
  correction: z.enum(CORRECTIONS),
  indicators: z.array(code).min(1),
  periods: z.array(code).min(1),
  local: z.boolean(),
  /**
   * h of sequential stopping for local Moran, present only when the run asked
   * for sequential p-values; absent (runs before the option, or with it off)
   * means every region used all the permutations.
   */
  sequentialExtremes: z.number().int().min(1).max(99_999).optional(),
  /**
   * Covariates of the residual diagnostics (indicators of the same panel
   * version), present only when the run controls for something; absent
   * (runs before the option, or without covariates) means none.
   */
  controlFor: controlForSchema.min(1).optional(),
  /**
   * Present only when the run asked for empirical-Bayes standardisation of
   * rates: the rate indicators of the run so treated, each with the events and
   * population indicators it was standardised from and its multiplier (frozen at the start, so a
   * later change to the declaration does not change what the run means).
   * Absent (runs before the option, or with raw rates) means every indicator
   * was analysed on its own values.
   */
  empiricalBayes: z.array(z.object({ indicator: code, events: code, population: code, multiplier: z.number().positive() })).min(1).optional(),
  panelVersionId: z.number().int().positive(),
  boundaryVersionId: z.number().int().positive(),
  /**
   * Bumped when a change to the computation would change stored numbers.
   * /2: Geary's C and General G take their pseudo p-values from the same
   * permutations as Moran's I (one shared test); /1 drew them separately.
   * Every other number is the same under both. Stored /1 runs still read.
   * Sequential p-values did not bump it: a run without `sequentialExtremes`
   * computes exactly what /2 computed, and one with it says so itself.
   */
  method: z.enum(["tessera-runs/1", "tessera-runs/2"]),
});
export type ResolvedRunParams = z.output<typeof resolvedRunParamsSchema>;

export const RUN_METHOD = "tessera-runs/2" as const;

/**
 * h of sequential stopping when a run asks for sequential p-values. Besag &
 * Clifford (1991) show h of 10–20 already loses little power against the
 * fixed-count test; 20 is the careful end of that common practice. A stopped
 * region's folded p is at least 2h/R, far above any usual alpha.
 */
export const SEQUENTIAL_EXTREMES = 20;

/** A fresh seed for a run whose user left the seed empty (stored, so reruns repeat it). */
export function freshSeed(): number {
  return Math.floor(Math.random() * 2_147_483_647);
}

// ——— Search parameters of the read endpoints ———

// Run numbers go to PostgreSQL as int4: one beyond its range was a 500.
const runNumber = idText("run must be a run number.");
const optionalRunId = runNumber.nullable().default(null);
const period = text({ min: 1, max: 120 });

export const SIGNIFICANCE_CLASSES = ["clustering", "dispersion", "not-significant"] as const;
/** What the residual diagnostics of a run with covariates can suggest (lib/spatial/regression suggestModel). */
export const MODEL_SUGGESTIONS = ["error", "lag", "both", "neither"] as const;

export const catalogueQuerySchema = z.object({
  run: optionalRunId,
  class: z
    .string()
    .default("")
    .transform((s) => s.split(",").filter(Boolean))
    .pipe(z.array(z.enum(SIGNIFICANCE_CLASSES, { message: "class must be clustering, dispersion or not-significant." }))),
  from: period.nullable().default(null),
  to: period.nullable().default(null),
  q: text({ max: 200 }).nullable().default(null),
  /** Rows whose residual diagnostics suggest one of these models (runs with covariates only). */
  suggestion: z
    .string()
    .default("")
    .transform((s) => s.split(",").filter(Boolean))
    .pipe(z.array(z.enum(MODEL_SUGGESTIONS, { message: "suggestion must be error, lag, both or neither." }))),
});

export const timelineQuerySchema = z.object({ indicator: text({ min: 1, max: 120 }), run: optionalRunId });
export const periodQuerySchema = timelineQuerySchema.extend({ period });
export const compareQuerySchema = timelineQuerySchema.extend({ a: period, b: period });
export const geometryQuerySchema = z.object({ run: runNumber });
/** Quantile classes the panel transitions offer (lib/runs/panel-transitions.ts); 5 by default. */
export const PANEL_TRANSITION_CLASS_CHOICES = [3, 4, 5] as const;
export const panelTransitionsQuerySchema = timelineQuerySchema.extend({
  classes: z
    .enum(["3", "4", "5"], { message: "classes must be 3, 4 or 5." })
    .default("5")
    .transform((k) => Number(k)),
});
