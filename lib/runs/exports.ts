/**
 * Tidy exports of one run for work in R or Python (docs/exports.md): the
 * global results (one row per indicator × period), the local results (one row
 * per region × indicator × period) and the run's weights as an edge list,
 * each as CSV or JSON. Every export is streamed: results come from
 * PostgreSQL through a cursor in batches (lib/db streamTuples) and are
 * written as they arrive, so a run of 35,000 regions never sits in memory as
 * a whole; the local results are unpacked from their column-wise jsonb in
 * PostgreSQL. Server-only; callers authorise and pass a run of the member's
 * workspace.
 *
 * Column names are snake_case and stable: a new column goes at the end of its
 * list, and a name is never reused for something else.
 */
import { z } from "zod";
import { streamTuples } from "@/lib/db";
import { ConflictError } from "@/lib/http/errors";
import { idText } from "@/lib/http/params";
import { prepareAnalysis } from "@/lib/spatial";
import { csvCell, type CsvCell } from "./csv";
import type { RunSummary } from "./queries";
import { geometryFor } from "./worker";

export const EXPORT_KINDS = ["global", "local", "weights"] as const;
export type ExportKind = (typeof EXPORT_KINDS)[number];
export const EXPORT_FORMATS = ["csv", "json"] as const;

/** The path parameters of GET …/runs/[runId]/export/[kind]. */
export const exportParamsSchema = z.object({
  runId: idText(),
  kind: z.enum(EXPORT_KINDS, { message: "kind must be global, local or weights." }),
});

/** The search parameters of GET …/runs/[runId]/export/[kind]. */
export const exportQuerySchema = z.object({
  format: z.enum(EXPORT_FORMATS, { message: "format must be csv or json." }).default("csv"),
});
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

/** The `format` field of a JSON export; the number changes only if a column changes meaning or goes away. */
export const EXPORT_JSON_FORMAT = "tessera-export/1";

/** One exported column: its name and the SQL that computes it from a run_results row `rr`. */
interface Column {
  readonly name: string;
  readonly sql: string;
}

const w = (key: string, cast = "float8") => `(rr.weights->>'${key}')::${cast}`;
const reg = (path: string, cast = "float8") => `(rr.regression #>> '{${path}}')::${cast}`;

/**
 * The global results: every stored statistic of an indicator-period. `$2` is
 * the run's per-workspace number, `$3` the indicators the run analysed as
 * empirical-Bayes standardised rates.
 */
export const GLOBAL_COLUMNS: readonly Column[] = [
  { name: "run", sql: "$2::int" },
  { name: "indicator", sql: "rr.indicator_code" },
  { name: "period", sql: "rr.period_key" },
  { name: "period_index", sql: "rr.period_index" },
  { name: "status", sql: "rr.status" },
  { name: "not_computed_reason", sql: "rr.reason" },
  { name: "n", sql: "rr.n" },
  { name: "regions_in_boundaries", sql: "rr.regions_in_boundaries" },
  { name: "excluded_missing", sql: "rr.excluded_missing" },
  { name: "excluded_islands", sql: "rr.excluded_islands" },
  { name: "eb_standardised", sql: "rr.indicator_code = ANY($3::text[])" },
  { name: "moran_i", sql: "rr.i" },
  { name: "expected_i", sql: "rr.expected_i" },
  { name: "kurtosis", sql: "rr.kurtosis" },
  { name: "variance_normality", sql: "rr.variance_normality" },
  { name: "variance_randomisation", sql: "rr.variance_randomisation" },
  { name: "z_normality", sql: "rr.z_normality" },
  { name: "z_randomisation", sql: "rr.z_randomisation" },
  { name: "p_normality", sql: "rr.p_normality" },
  { name: "p_randomisation", sql: "rr.p_randomisation" },
  { name: "p_randomisation_greater", sql: "rr.p_randomisation_greater" },
  { name: "permutations", sql: "rr.permutations" },
  { name: "permutation_mean", sql: "rr.perm_mean" },
  { name: "permutation_sd", sql: "rr.perm_sd" },
  { name: "permutation_z", sql: "rr.perm_z" },
  { name: "pseudo_p_greater", sql: "rr.perm_p_greater" },
  { name: "pseudo_p_less", sql: "rr.perm_p_less" },
  { name: "pseudo_p_two_sided", sql: "rr.perm_p" },
  { name: "null_band_low", sql: "rr.band_low" },
  { name: "null_band_high", sql: "rr.band_high" },
  { name: "deciding_p", sql: "rr.deciding_p" },
  { name: "adjusted_p", sql: "rr.adjusted_p" },
  { name: "significance", sql: "rr.significance" },
  { name: "delta_i", sql: "rr.delta_i" },
  { name: "geary_c", sql: "rr.geary_c" },
  { name: "geary_z_randomisation", sql: "rr.geary_z" },
  { name: "geary_p_randomisation", sql: "rr.geary_p" },
  { name: "geary_pseudo_p", sql: "rr.geary_pseudo_p" },
  { name: "general_g", sql: "rr.general_g" },
  { name: "general_g_expected", sql: "rr.general_g_expected" },
  { name: "general_g_z", sql: "rr.general_g_z" },
  { name: "general_g_p", sql: "rr.general_g_p" },
  { name: "general_g_pseudo_p", sql: "rr.general_g_pseudo_p" },
  { name: "weights_rule", sql: "rr.weights->>'rule'" },
  { name: "weights_transform", sql: "rr.weights->>'transform'" },
  { name: "island_policy", sql: "rr.weights->>'islandPolicy'" },
  { name: "weights_restricted", sql: w("restricted", "boolean") },
  { name: "weights_s0", sql: w("S0") },
  { name: "weights_s1", sql: w("S1") },
  { name: "weights_s2", sql: w("S2") },
  { name: "weights_links", sql: w("links", "int") },
  { name: "neighbours_mean", sql: w("meanNeighbours") },
  { name: "neighbours_min", sql: w("minNeighbours", "int") },
  { name: "neighbours_max", sql: w("maxNeighbours", "int") },
  { name: "islands", sql: "jsonb_array_length(rr.weights->'islands')" },
  { name: "islands_attached", sql: "jsonb_array_length(rr.weights->'attached')" },
  { name: "covariates", sql: "(SELECT string_agg(c, ';' ORDER BY o) FROM jsonb_array_elements_text(rr.regression->'covariates') WITH ORDINALITY AS u(c, o))" },
  { name: "regression_n", sql: reg("n", "int") },
  { name: "regression_excluded", sql: reg("excluded", "int") },
  { name: "regression_message", sql: "rr.regression->>'message'" },
  { name: "r_squared", sql: reg("rSquared") },
  { name: "adjusted_r_squared", sql: reg("adjustedRSquared") },
  { name: "sigma2", sql: reg("sigma2") },
  { name: "residual_moran_i", sql: reg("moran,I") },
  { name: "residual_expected_i", sql: reg("moran,expectedI") },
  { name: "residual_variance", sql: reg("moran,variance") },
  { name: "residual_z", sql: reg("moran,z") },
  { name: "residual_p_two_sided", sql: reg("moran,pTwoSided") },
  { name: "residual_p_greater", sql: reg("moran,pGreater") },
  { name: "lm_error", sql: reg("lagrange,error,statistic") },
  { name: "lm_error_p", sql: reg("lagrange,error,p") },
  { name: "lm_lag", sql: reg("lagrange,lag,statistic") },
  { name: "lm_lag_p", sql: reg("lagrange,lag,p") },
  { name: "robust_lm_error", sql: reg("lagrange,robustError,statistic") },
  { name: "robust_lm_error_p", sql: reg("lagrange,robustError,p") },
  { name: "robust_lm_lag", sql: reg("lagrange,robustLag,statistic") },
  { name: "robust_lm_lag_p", sql: reg("lagrange,robustLag,p") },
  { name: "lm_combined", sql: reg("lagrange,combined,statistic") },
  { name: "lm_combined_df", sql: reg("lagrange,combined,df", "int") },
  { name: "lm_combined_p", sql: reg("lagrange,combined,p") },
  { name: "model_suggestion", sql: "rr.model_suggestion" },
  { name: "note", sql: "rr.note" },
];

/**
 * The local results, unpacked from the column-wise jsonb of each row
 * (lib/runs/types LocalFields, GiStarFields) by PostgreSQL: ROWS FROM zips the
 * arrays by position, so each array is read once per indicator-period.
 */
const LOCAL_ARRAYS = [
  ["l_region", "rr.local->'ids'"],
  ["l_ii", "rr.local->'Ii'"],
  ["l_z", "rr.local->'z'"],
  ["l_pseudo_p", "rr.local->'pseudoP'"],
  ["l_adjusted_p", "rr.local->'adjustedP'"],
  ["l_quadrant", "rr.local->'quadrant'"],
  ["l_cluster", "rr.local->'cluster'"],
  ["l_standardised", "rr.local->'standardised'"],
  ["l_lag", "rr.local->'lag'"],
  ["l_permutations_used", "rr.local->'permutationsUsed'"],
  ["g_region", "rr.gi_star->'ids'"],
  ["g_z", "rr.gi_star->'z'"],
  ["g_p", "rr.gi_star->'p'"],
  ["g_pseudo_p", "rr.gi_star->'pseudoP'"],
  ["g_adjusted_p", "rr.gi_star->'adjustedP'"],
  ["g_class", "rr.gi_star->'classes'"],
] as const;

export const LOCAL_COLUMNS: readonly Column[] = [
  { name: "run", sql: "$2::int" },
  { name: "indicator", sql: "rr.indicator_code" },
  { name: "period", sql: "rr.period_key" },
  { name: "region", sql: "u.l_region" },
  { name: "region_name", sql: "rg.name" },
  { name: "local_i", sql: "u.l_ii::float8" },
  { name: "local_z", sql: "u.l_z::float8" },
  { name: "local_pseudo_p", sql: "u.l_pseudo_p::float8" },
  { name: "local_adjusted_p", sql: "u.l_adjusted_p::float8" },
  { name: "quadrant", sql: "u.l_quadrant" },
  { name: "cluster", sql: "u.l_cluster" },
  { name: "alpha", sql: "m.alpha" },
  { name: "correction", sql: "m.correction" },
  { name: "standardised_value", sql: "u.l_standardised::float8" },
  { name: "spatial_lag", sql: "u.l_lag::float8" },
  { name: "permutations_used", sql: "u.l_permutations_used::int" },
  { name: "gi_star_z", sql: "u.g_z::float8" },
  { name: "gi_star_p", sql: "u.g_p::float8" },
  { name: "gi_star_pseudo_p", sql: "u.g_pseudo_p::float8" },
  { name: "gi_star_adjusted_p", sql: "u.g_adjusted_p::float8" },
  { name: "gi_star_class", sql: "u.g_class" },
];

export const WEIGHTS_COLUMNS: readonly string[] = ["from", "to", "weight"];

/** What the weights export says about itself (the JSON's `readme`; docs/exports.md says the same for CSV). */
export function weightsReadme(run: Pick<RunSummary, "params">): string {
  const p = run.params;
  return (
    `The base weights of the run: rule "${p.weights}", transform "${p.transform}", island policy "${p.islandPolicy}", ` +
    `built from boundary version ${p.boundaryVersionId} over every region of it, one row per directed link (from, to, weight); a region without links has no row. ` +
    `In a period where some regions have no value, the run used these weights restricted to the regions with a value` +
    (p.transform === "row-standardised" ? " and re-standardised" : "") +
    `, with the island policy applied again; those restricted weights are not exported.`
  );
}

function globalSql(): string {
  return `SELECT ${GLOBAL_COLUMNS.map((c) => c.sql).join(", ")}
            FROM run_results rr
           WHERE rr.run_id = $1
           ORDER BY rr.indicator_code, rr.period_index`;
}

function localSql(): string {
  return `SELECT ${LOCAL_COLUMNS.map((c) => c.sql).join(", ")}
            FROM run_results rr
            JOIN runs r ON r.id = rr.run_id
            CROSS JOIN LATERAL ROWS FROM (${LOCAL_ARRAYS.map(([, a]) => `jsonb_array_elements_text(${a})`).join(", ")})
                 WITH ORDINALITY AS u(${LOCAL_ARRAYS.map(([n]) => n).join(", ")}, ord)
            -- Read once per row of run_results: an expression on rr.local in the select list would unpack the whole jsonb again for every region.
            CROSS JOIN LATERAL (SELECT (rr.local->>'alpha')::float8 AS alpha, rr.local->>'correction' AS correction OFFSET 0) m
            LEFT JOIN regions rg ON rg.boundary_version_id = r.boundary_version_id AND rg.code = u.l_region
           WHERE rr.run_id = $1 AND rr.local IS NOT NULL
           ORDER BY rr.indicator_code, rr.period_index, u.ord`;
}

/** A safe file name: workspace slug, run number and kind (slugs are already [a-z0-9-]; anything else is dropped). */
export function exportFileName(slug: string, runNumber: number, kind: ExportKind, format: ExportFormat): string {
  const safeSlug = slug.replace(/[^a-z0-9-]/g, "").slice(0, 64) || "workspace";
  return `tessera-${safeSlug}-run-${Math.trunc(runNumber)}-${kind}.${format}`;
}

export const EXPORT_CONTENT_TYPES: Record<ExportFormat, string> = {
  csv: "text/csv; charset=utf-8",
  json: "application/json; charset=utf-8",
};

/** Rows of an export, in batches, as arrays aligned with its columns. */
type Batches = AsyncGenerator<readonly (readonly unknown[])[], void, undefined>;

/** The weights edge list in batches, from the run's base weights (see weightsReadme). */
async function* weightsBatches(run: RunSummary, batchSize = 5_000): Batches {
  const geometry = await geometryFor(run.params);
  const n = geometry.baseWeights.ids.length;
  // Every region with a value: the island policy and the transform as the run applies them in a period without missing values.
  const prepared = prepareAnalysis(geometry.baseWeights, new Float64Array(n), {
    islandPolicy: run.params.islandPolicy,
    transform: run.params.transform,
    points: geometry.points,
  });
  const { ids, offsets, neighbours, weights } = prepared.weights;
  let batch: (readonly unknown[])[] = [];
  for (let i = 0; i < ids.length; i++) {
    for (let k = offsets[i]; k < offsets[i + 1]; k++) {
      batch.push([ids[i], ids[neighbours[k]], weights[k]]);
      if (batch.length >= batchSize) {
        yield batch;
        batch = [];
      }
    }
  }
  if (batch.length) yield batch;
}

function columnsOf(kind: ExportKind): readonly string[] {
  return kind === "global" ? GLOBAL_COLUMNS.map((c) => c.name) : kind === "local" ? LOCAL_COLUMNS.map((c) => c.name) : WEIGHTS_COLUMNS;
}

function batchesOf(run: RunSummary, kind: ExportKind): Batches {
  if (kind === "weights") return weightsBatches(run);
  if (kind === "local") return streamTuples(localSql(), [run.id, run.number], 2_000);
  const eb = (run.params.empiricalBayes ?? []).map((d) => d.indicator);
  return streamTuples(globalSql(), [run.id, run.number, eb], 500);
}

/** A cell as CSV text: booleans as TRUE/FALSE (what R and pandas read as logical), the rest through the formula guard of csv.ts. */
function csvValue(value: unknown): string {
  if (typeof value === "boolean") return value ? "TRUE" : "FALSE";
  return csvCell(value as CsvCell);
}

/** A cell as JSON: stored numbers are finite; anything that is not becomes null. */
function jsonValue(value: unknown): string {
  if (value === null || value === undefined) return "null";
  if (typeof value === "number") return Number.isFinite(value) ? JSON.stringify(value) : "null";
  return JSON.stringify(value);
}

/**
 * The export as a byte stream. The first batch is read before the stream is
 * returned, so a refused or failed read still becomes an error answer; a
 * failure later ends the stream early (the JSON then does not parse). Throws
 * ConflictError for results of a run that has not completed: its rows are
 * not all there and not yet classed under the run-wide correction.
 */
export async function exportStream(run: RunSummary, slug: string, kind: ExportKind, format: ExportFormat): Promise<ReadableStream<Uint8Array>> {
  if (kind !== "weights" && run.state !== "completed") {
    throw new ConflictError(`Run ${run.number} is ${run.state}; its results can be exported once it has completed.`);
  }
  const columns = columnsOf(kind);
  const encoder = new TextEncoder();
  const keys = columns.map((c) => JSON.stringify(c));
  const batches = batchesOf(run, kind);
  let pending: IteratorResult<readonly (readonly unknown[])[], void> | null = await batches.next();
  let first = true;

  const head = (): string => {
    if (format === "csv") return columns.map(csvValue).join(",") + "\r\n";
    const meta: Record<string, unknown> = { format: EXPORT_JSON_FORMAT, kind, workspace: slug, run: run.number, columns };
    if (kind === "weights") {
      Object.assign(meta, {
        weights: { rule: run.params.weights, transform: run.params.transform, islandPolicy: run.params.islandPolicy, boundaryVersionId: run.params.boundaryVersionId },
        readme: weightsReadme(run),
      });
    }
    // The metadata object, left open for the rows.
    return `${JSON.stringify(meta).slice(0, -1)},"rows":[`;
  };
  const body = (rows: readonly (readonly unknown[])[]): string => {
    const parts: string[] = [];
    for (const row of rows) {
      if (format === "csv") parts.push(row.map(csvValue).join(",") + "\r\n");
      else {
        parts.push(`${first ? "\n" : ",\n"}{${row.map((v, i) => `${keys[i]}:${jsonValue(v)}`).join(",")}}`);
        first = false;
      }
    }
    return parts.join("");
  };

  return new ReadableStream<Uint8Array>(
    {
      start(controller) {
        controller.enqueue(encoder.encode(head()));
      },
      async pull(controller) {
        try {
          const next = pending ?? (await batches.next());
          pending = null;
          if (next.done) {
            if (format === "json") controller.enqueue(encoder.encode("\n]}\n"));
            controller.close();
            return;
          }
          controller.enqueue(encoder.encode(body(next.value)));
        } catch (error) {
          console.error(`[tessera] export of run ${run.id} (${kind}, ${format}) failed`, error);
          controller.error(error);
        }
      },
      async cancel() {
        // The client went away: close the cursor and hand the connection back.
        await batches.return(undefined);
      },
    },
    { highWaterMark: 1 },
  );
}
