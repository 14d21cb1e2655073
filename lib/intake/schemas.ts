/**
 * zod schemas for intake: the column mapping, panel validation options, the
 * boundary selection, and the CLI arguments. The web forms reuse these.
 */
import { z } from "zod";
import { text } from "@/lib/http/params";
import { rateDeclarationSchema } from "./rates";

// Stored as jsonb, where PostgreSQL refuses NUL: the shared text block refuses control characters.
const columnName = text({ min: 1, max: 500, empty: "a column name is required" });

/** Long layout: one observation per row (region, period, indicator, value). */
export const longMappingSchema = z.object({
  layout: z.literal("long"),
  region: columnName,
  period: columnName,
  indicator: columnName,
  value: columnName,
});

/** Wide layout: one row per region and period, one column per indicator (the header is the indicator code). */
export const wideMappingSchema = z.object({
  layout: z.literal("wide"),
  region: columnName,
  period: columnName,
  indicators: z.array(columnName).min(1, "choose at least one indicator column"),
});

/** One header column of a wide-by-period file: the indicator and the period its cells hold. */
export const periodColumnSchema = z.object({
  column: columnName,
  indicator: text({ min: 1, max: 120, empty: "name the indicator of the column", tooLong: "the indicator code must have 1 to 120 characters" }),
  /** As written in the header (any spelling parsePeriod accepts); the validator parses it and names the column if it cannot. */
  period: text({ min: 1, max: 40, empty: "the column needs a period" }),
});

/**
 * Wide by period: one row per region, the periods (and indicators) in the
 * header, e.g. `region,unemployment_rate_2019,unemployment_rate_2020` or, for a
 * single indicator named by the user, `region,2019,2020`.
 */
export const widePeriodMappingSchema = z.object({
  layout: z.literal("wide-period"),
  region: columnName,
  columns: z.array(periodColumnSchema).min(1, "choose at least one period column").max(10_000, "at most 10,000 period columns"),
});

export const columnMappingSchema = z.discriminatedUnion("layout", [longMappingSchema, wideMappingSchema, widePeriodMappingSchema]);

export const layoutSchema = z.enum(["long", "wide", "wide-period"]);
export const decimalSchema = z.enum([".", ","]);
export const delimiterSchema = z.enum([",", ";", "\t"]);

export const panelOptionsSchema = z.object({
  /** Decimal separator of the value cells. */
  decimal: decimalSchema.default("."),
  /** Field delimiter; sniffed from the first lines when absent. */
  delimiter: delimiterSchema.optional(),
  /** Layout; taken from `mapping` or suggested from the header when absent. */
  layout: layoutSchema.optional(),
  /** Column mapping; suggested from the header when absent. */
  mapping: columnMappingSchema.optional(),
  /** When the mapping is suggested: the indicator code of header columns that name only a period (`region,2019,2020`). */
  periodIndicator: z.string().trim().min(1).max(120).optional(),
  /** Region codes rows with a code absent from the boundaries: an error (default), or dropped with a warning. */
  unknownRegions: z.enum(["error", "drop"]).default("error"),
  /** Cap on the errors (and warnings) listed; the counts are always complete. */
  maxErrors: z.number().int().min(1).max(10_000).default(100),
  /** Cap on listed examples (duplicates, region codes). */
  maxExamples: z.number().int().min(1).max(10_000).default(20),
  /** Rates the workspace has declared (indicator records); the file's own `# rate:` lines win for the rates they name. */
  rates: z.array(rateDeclarationSchema).max(10_000).default([]),
});

export type ColumnMapping = z.infer<typeof columnMappingSchema>;
export type LongMapping = z.infer<typeof longMappingSchema>;
export type WideMapping = z.infer<typeof wideMappingSchema>;
export type WidePeriodMapping = z.infer<typeof widePeriodMappingSchema>;
export type PeriodColumn = z.infer<typeof periodColumnSchema>;
export type PanelLayout = z.infer<typeof layoutSchema>;
export type PanelOptionsInput = z.input<typeof panelOptionsSchema>;
export type PanelOptions = z.output<typeof panelOptionsSchema>;

/** Which object of a topology holds the regions, and which property is the region code. */
export const boundarySelectionSchema = z.object({
  object: z.string().trim().min(1, "name the topology object holding the regions"),
  idProperty: z.string().trim().min(1, "name the property holding the region code"),
});
export type BoundarySelection = z.infer<typeof boundarySelectionSchema>;

/** Arguments of `npm run intake -- check`. */
export const checkArgsSchema = z.object({
  boundaries: z.string().min(1, "--boundaries FILE is required"),
  object: z.string().min(1, "--object NAME is required"),
  id: z.string().min(1, "--id PROP is required"),
  panel: z.string().min(1, "--panel FILE.csv is required"),
  layout: layoutSchema.optional(),
  decimal: decimalSchema.default("."),
  delimiter: z.enum([",", ";", "tab", "\t"]).optional(),
  region: z.string().min(1).optional(),
  period: z.string().min(1).optional(),
  indicator: z.string().min(1).optional(),
  value: z.string().min(1).optional(),
  indicators: z.string().min(1).optional(),
  unknownRegions: z.enum(["error", "drop"]).default("error"),
  maxErrors: z.coerce.number().int().min(1).max(10_000).default(100),
});
export type CheckArgs = z.infer<typeof checkArgsSchema>;
