import { z } from "zod";
import { RATE_MULTIPLIERS } from "./rates";

// Answers of the intake routes, as zod schemas for the API reference
// (lib/api-docs). Large nested parts (validation reports, TopoJSON, previews)
// are named with their main fields and left open (looseObject).

const when = z.string().meta({ description: "ISO 8601 time (UTC)." });

/** A rate declaration as answered (rateSpecSchema in ./rates.ts is what a steward sends). */
export const rateSpecAnswerSchema = z.object({
  events: z.string().meta({ description: "The events indicator." }),
  population: z.string().meta({ description: "The population indicator." }),
  multiplier: z.number().meta({ description: `One of ${RATE_MULTIPLIERS.join(", ")}.` }),
});

export const indicatorMetaSchema = z
  .object({
    code: z.string(),
    label: z.string(),
    unit: z.string().nullable(),
    description: z.string().nullable(),
    source: z.string().nullable(),
    higherIsBetter: z.boolean().nullable(),
    rate: rateSpecAnswerSchema.nullable().meta({ description: "Set when the indicator is declared a rate: events / population × multiplier." }),
  })
  .meta({ id: "IndicatorMeta" });

export const indicatorListResponseSchema = z.object({ indicators: z.array(indicatorMetaSchema) });

export const uploadTicketResponseSchema = z.object({
  uploadId: z.string().meta({ description: "The upload's id (a UUID)." }),
  url: z.string().meta({ description: "Presigned URL: PUT the file's bytes here, with exactly `contentType`." }),
  contentType: z.string(),
  expiresAt: when,
});

export const uploadViewSchema = z
  .object({
    id: z.string(),
    kind: z.enum(["boundaries", "panel", "crosswalk"]),
    fileName: z.string(),
    size: z.number().int(),
    sha256: z.string(),
    state: z.enum(["pending", "received", "failed"]),
    error: z.string().nullable(),
  })
  .meta({ id: "Upload" });

export const uploadPreviewResponseSchema = z.object({
  kind: z.enum(["boundaries", "panel", "crosswalk"]),
  preview: z.looseObject({ upload: uploadViewSchema }).meta({ description: "Panels: the sniffed layout, columns, suggested mapping and target panel. Boundaries: the topology's objects and properties and the target set." }),
});

export const createdVersionResponseSchema = z.object({
  kind: z.enum(["boundaries", "panel"]),
  id: z.number().int().meta({ description: "The new version's id." }),
  version: z.number().int().meta({ description: "Its number within its boundary set or panel." }),
  parentId: z.number().int().meta({ description: "The boundary set or panel it belongs to." }),
  jobId: z.string().nullable().meta({ description: "The validation job queued for it." }),
});

export const versionStateResponseSchema = z.object({ state: z.enum(["published", "archived"]) });

export const intakeOverviewResponseSchema = z
  .looseObject({
    role: z.string(),
    canCurate: z.boolean(),
  })
  .meta({ description: "Boundary sets and panels with their versions (unpublished ones only for stewards and managers), and what the caller may do." });

export const versionDetailResponseSchema = z.looseObject({}).meta({ description: "One version with its state, validation report and difference from the previous version." });

export const topologyResponseSchema = z.object({
  topology: z.looseObject({ type: z.literal("Topology") }).meta({ description: "The stored TopoJSON." }),
  objectName: z.string(),
  idProperty: z.string(),
  nameProperty: z.string().nullable(),
  coordinates: z.enum(["planar", "lonlat"]),
  regionNames: z.record(z.string(), z.string()).meta({ description: "Region code → name." }),
});

export const weightsPreviewResponseSchema = z.object({
  rule: z.string(),
  coordinates: z.enum(["planar", "lonlat"]),
  ids: z.array(z.string()),
  centroids: z.array(z.tuple([z.number(), z.number()])),
  links: z.array(z.tuple([z.number().int(), z.number().int()])).meta({ description: "Undirected links between region indices (i < j)." }),
  histogram: z.array(z.object({ neighbours: z.number().int(), regions: z.number().int() })),
  islands: z.array(z.string()),
  n: z.number().int(),
  meanNeighbours: z.number(),
  components: z.number().int(),
  band: z.number().nullable(),
});
