import { z } from "zod";

// Answers of the reform routes (crosswalks, harmonising), as zod schemas for
// the API reference (lib/api-docs).

const boundaryVersionRef = z.object({ id: z.number().int(), setName: z.string(), version: z.number().int(), state: z.string(), regionCount: z.number().int().nullable() });

export const crosswalkListItemSchema = z
  .object({
    id: z.number().int(),
    origin: z.enum(["derived", "uploaded"]),
    status: z.enum(["pending", "ready", "rejected"]),
    fileName: z.string().nullable(),
    pairCount: z.number().int().nullable(),
    from: boundaryVersionRef,
    to: boundaryVersionRef,
    createdAt: z.string(),
    createdBy: z.string().nullable(),
  })
  .meta({ id: "Crosswalk" });

export const crosswalkListResponseSchema = z.object({ crosswalks: z.array(crosswalkListItemSchema) });

export const crosswalkDetailResponseSchema = crosswalkListItemSchema.extend({
  report: z.looseObject({}).nullable().meta({ description: "The checks of an uploaded crosswalk CSV (or of a derived one)." }),
  pairs: z.array(z.looseObject({ from: z.string(), to: z.string(), share: z.number(), overlapArea: z.number().nullable() })),
  harmonised: z.array(z.object({ panelVersionId: z.number().int(), panelName: z.string(), version: z.number().int(), state: z.string() })),
});

export const crosswalkCreatedResponseSchema = z.object({
  id: z.number().int(),
  status: z.enum(["ready", "rejected"]),
  report: z.looseObject({}).optional().meta({ description: "For an uploaded CSV: its checks, reported like panel validation." }),
});

export const harmoniseDefaultsResponseSchema = z.object({
  indicators: z.array(z.string()),
  methods: z.record(z.string(), z.looseObject({ kind: z.string() })).meta({ description: "The default method per indicator (extensive, intensive or intensive-by a denominator)." }),
});

export const harmonisedVersionResponseSchema = z.object({
  id: z.number().int().meta({ description: "The new panel version's id." }),
  version: z.number().int(),
  panelId: z.number().int(),
  panelName: z.string(),
  jobId: z.string().nullable().meta({ description: "The validation job queued for it." }),
  provenance: z.looseObject({}).meta({ description: "Source version, crosswalk, methods per indicator and carried periods." }),
});
