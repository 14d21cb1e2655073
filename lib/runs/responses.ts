import { z } from "zod";
import { CATALOGUE_FIELDS, CATALOGUE_FORMAT } from "./catalogue-wire";
import { EXPORT_JSON_FORMAT } from "./exports";
import { resolvedRunParamsSchema } from "./schemas";

// Answers of the run and result routes, as zod schemas for the API reference
// (lib/api-docs). The handlers build these answers from the types in
// queries.ts; large nested parts (per-region results, TopoJSON) are named with
// their main fields and left open (looseObject) rather than copied in full.

const RUN_STATES = ["queued", "running", "completed", "failed", "cancelled"] as const;
const when = z.string().meta({ description: "ISO 8601 time (UTC)." });

export const runSummarySchema = z
  .looseObject({
    id: z.number().int().meta({ description: "Global run id: URLs and API parameters." }),
    number: z.number().int().meta({ description: "The run's number within the workspace (what labels show)." }),
    state: z.enum(RUN_STATES),
    origin: z.string(),
    rerunOf: z.number().int().nullable(),
    rerunOfNumber: z.number().int().nullable(),
    params: resolvedRunParamsSchema,
    panelName: z.string(),
    panelVersion: z.number().int(),
    progress: z.number().meta({ description: "0 to 1." }),
    piecesTotal: z.number().int(),
    piecesDone: z.number().int(),
    resultsTotal: z.number().int(),
    periodsDone: z.number().int(),
    significanceBasis: z.string().nullable(),
    error: z.string().nullable(),
    createdBy: z.string().nullable(),
    createdAt: when,
    startedAt: when.nullable(),
    finishedAt: when.nullable(),
  })
  .meta({ id: "RunSummary" });

export const runListResponseSchema = z.object({ runs: z.array(runSummarySchema).meta({ description: "The newest 50 runs, newest first." }) });

export const runDetailResponseSchema = z.object({
  run: runSummarySchema,
  pieces: z.array(
    z.object({ indicator: z.string(), state: z.enum(RUN_STATES), attempts: z.number().int(), periodsTotal: z.number().int(), periodsDone: z.number().int(), error: z.string().nullable() }),
  ),
});

export const runStartedResponseSchema = z.object({ runId: z.number().int(), number: z.number().int(), params: resolvedRunParamsSchema });
export const runRerunResponseSchema = z.object({ runId: z.number().int(), number: z.number().int(), rerunOf: z.number().int().meta({ description: "The id of the run repeated." }) });
export const runCancelledResponseSchema = z.object({ runId: z.number().int(), state: z.literal("cancelled") });

export const runOptionsResponseSchema = z.object({
  options: z.array(
    z.object({
      panelVersionId: z.number().int(),
      panelName: z.string(),
      version: z.number().int(),
      indicators: z.array(z.object({ code: z.string(), label: z.string(), rate: z.boolean().meta({ description: "A declared rate whose events and population are in this version." }) })),
      periods: z.array(z.string()),
      regions: z.number().int(),
    }),
  ).meta({ description: "Published panel versions a run may analyse." }),
});

export const catalogueResponseSchema = z
  .object({
    format: z.literal(CATALOGUE_FORMAT),
    fields: z.array(z.enum(CATALOGUE_FIELDS)).meta({ description: "The name of each position of a row tuple, in order." }),
    runs: z.array(z.looseObject({ id: z.number().int(), number: z.number().int() })),
    indicators: z.array(z.object({ code: z.string(), label: z.string(), unit: z.string().nullable() })),
    rows: z.array(z.array(z.unknown())).meta({ description: "One tuple per indicator and period, its values in the order of `fields`." }),
  })
  .meta({ description: "Field-ordered tuples: one row per indicator and period of the completed runs." });

export const timelineResponseSchema = z
  .looseObject({ run: runSummarySchema, indicator: z.looseObject({ code: z.string(), label: z.string() }), points: z.array(z.looseObject({ period: z.string() })), harmonisation: z.looseObject({}).nullable() })
  .meta({ description: "Moran's I per period with E[I], the permutation band, z, n and the weights used, for one indicator of one run (the newest by default)." });

export const robustnessResponseSchema = z.object({
  runId: z.number().int(),
  indicator: z.string(),
  period: z.string(),
  transform: z.string(),
  entries: z.array(z.looseObject({ weights: z.string() })).meta({ description: "Moran's I of the period under queen, rook, k-nearest and distance-band weights." }),
});

export const mapResponseSchema = z.object({
  run: runSummarySchema,
  indicator: z.looseObject({ code: z.string(), label: z.string() }),
  map: z.looseObject({}).meta({ description: "Values, local Moran and local Gi* classes per region for the period." }),
  reachability: z.unknown().meta({ description: "Whether this period's permutations can reach significance under the run's correction." }),
});

export const mapGeometryResponseSchema = z.looseObject({}).meta({ description: "The run's boundaries as TopoJSON with the region codes and names." });

export const mapRatesResponseSchema = z.object({
  runId: z.number().int(),
  indicator: z.string(),
  rates: z.looseObject({}).meta({ description: "Raw, global empirical-Bayes and local empirical-Bayes rates per region, computed on request." }),
});

export const transitionsResponseSchema = z.object({
  runId: z.number().int(),
  transitions: z.looseObject({}).meta({ description: "The spatial Markov table of class moves over the panel, with its homogeneity test." }),
});

export const compareResponseSchema = z.object({
  runId: z.number().int(),
  comparison: z.looseObject({}).meta({ description: "Both periods' local clusters and the transition table of cluster classes between them (earlier → later)." }),
});

export const deskResponseSchema = z
  .looseObject({
    runs: z.array(runSummarySchema),
    latest: runSummarySchema.nullable(),
    previous: runSummarySchema.nullable().meta({ description: "The newest earlier run of the same panel computed the same way." }),
    movements: z.array(z.looseObject({})),
    classChanges: z.array(z.looseObject({})),
  }).meta({ description: "The workspace home: the latest runs and the latest movements." });

export const exportJsonDescription = `JSON (\`format: "${EXPORT_JSON_FORMAT}"\`) with the columns and rows; or CSV with a header line. Columns are listed in docs/exports.md.`;
