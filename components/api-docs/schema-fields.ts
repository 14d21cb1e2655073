// Reading the JSON Schemas inside the OpenAPI document (lib/api-docs) into
// rows the API reference can show: a field's name, its type in a few words,
// whether it is required, its limits and its description. Pure, no React.

export type JsonSchema = {
  $ref?: string;
  type?: string | string[];
  enum?: unknown[];
  const?: unknown;
  anyOf?: JsonSchema[];
  oneOf?: JsonSchema[];
  allOf?: JsonSchema[];
  items?: JsonSchema;
  prefixItems?: JsonSchema[];
  properties?: Record<string, JsonSchema>;
  required?: string[];
  additionalProperties?: JsonSchema | boolean;
  description?: string;
  default?: unknown;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  exclusiveMaximum?: number;
  minLength?: number;
  maxLength?: number;
  minItems?: number;
  maxItems?: number;
  pattern?: string;
  format?: string;
};

export interface FieldRow {
  name: string;
  type: string;
  required: boolean;
  notes: string[];
  description: string | null;
}

/** The schema a `$ref` ("#/components/schemas/X") points at; the schema itself otherwise. */
export function resolve(schema: JsonSchema | undefined, schemas: Record<string, JsonSchema>): JsonSchema {
  if (!schema) return {};
  const ref = schema.$ref?.replace(/^#\/components\/schemas\//, "");
  return ref ? (schemas[ref] ?? {}) : schema;
}

function refName(schema: JsonSchema): string | null {
  return schema.$ref?.replace(/^#\/components\/schemas\//, "") ?? null;
}

/** A schema's type in a few words: "string", "integer", "one of a, b", "list of RunSummary", "text or null". */
export function typeOf(schema: JsonSchema, schemas: Record<string, JsonSchema>, depth = 0): string {
  const named = refName(schema);
  if (named) return named;
  if (schema.const !== undefined) return JSON.stringify(schema.const);
  if (schema.enum) return `one of ${schema.enum.map((v) => JSON.stringify(v)).join(", ")}`;
  const union = schema.anyOf ?? schema.oneOf;
  if (union && depth < 3) return [...new Set(union.map((s) => typeOf(s, schemas, depth + 1)))].join(" or ");
  if (schema.allOf && depth < 3) return schema.allOf.map((s) => typeOf(s, schemas, depth + 1)).join(" and ");
  const type = Array.isArray(schema.type) ? schema.type.join(" or ") : schema.type;
  if (type === "array") {
    if (schema.prefixItems) return `[${schema.prefixItems.map((s) => typeOf(s, schemas, depth + 1)).join(", ")}]`;
    return schema.items && depth < 3 ? `list of ${typeOf(schema.items, schemas, depth + 1)}` : "list";
  }
  if (type === "object" && !schema.properties && schema.additionalProperties && typeof schema.additionalProperties === "object") {
    return `map of ${typeOf(schema.additionalProperties, schemas, depth + 1)}`;
  }
  return type ?? "any";
}

const SAFE_INTEGER = 9_007_199_254_740_991;

/** Limits worth saying: ranges, lengths, patterns, defaults. */
export function notesOf(schema: JsonSchema): string[] {
  const notes: string[] = [];
  const s = schema.anyOf?.find((x) => x.type !== "null") ?? schema;
  const min = s.minimum ?? s.exclusiveMinimum;
  const max = s.maximum ?? s.exclusiveMaximum;
  const shown = (n: number | undefined) => n !== undefined && Math.abs(n) !== SAFE_INTEGER;
  if (shown(min) && shown(max)) notes.push(`${min}${s.exclusiveMinimum !== undefined ? " (excl.)" : ""} to ${max}`);
  else if (shown(min)) notes.push(`${s.exclusiveMinimum !== undefined ? ">" : "≥"} ${min}`);
  else if (shown(max)) notes.push(`≤ ${max}`);
  if (s.minLength !== undefined && s.minLength > 0 && s.maxLength !== undefined) notes.push(`${s.minLength}–${s.maxLength} characters`);
  else if (s.maxLength !== undefined) notes.push(`at most ${s.maxLength} characters`);
  if (s.maxItems !== undefined) notes.push(`at most ${s.maxItems} items`);
  if (s.pattern) notes.push(`pattern ${s.pattern}`);
  if (s.format) notes.push(s.format);
  if (schema.default !== undefined) notes.push(`default ${JSON.stringify(schema.default)}`);
  return notes;
}

/** The fields of an object schema, nested objects as `a.b` (two levels), for a table. */
export function fieldsOf(schema: JsonSchema | undefined, schemas: Record<string, JsonSchema>, prefix = "", depth = 0): FieldRow[] {
  const target = resolve(schema, schemas);
  const variants = target.oneOf ?? target.anyOf;
  if (!target.properties && variants) {
    // A union of objects (e.g. a column mapping per layout): every variant's fields, each once.
    const seen = new Map<string, FieldRow>();
    for (const v of variants) for (const row of fieldsOf(v, schemas, prefix, depth)) if (!seen.has(row.name)) seen.set(row.name, { ...row, required: false });
    return [...seen.values()];
  }
  const rows: FieldRow[] = [];
  for (const [name, raw] of Object.entries(target.properties ?? {})) {
    const field = raw.$ref ? { ...resolve(raw, schemas), description: raw.description ?? resolve(raw, schemas).description } : raw;
    const full = prefix ? `${prefix}.${name}` : name;
    rows.push({ name: full, type: typeOf(raw, schemas), required: (target.required ?? []).includes(name), notes: notesOf(field), description: field.description ?? null });
    const inner = field.anyOf?.find((x) => x.type === "object" || x.$ref) ?? field;
    const nested = resolve(inner, schemas);
    if (depth < 1 && !raw.$ref && nested.type === "object" && nested.properties) rows.push(...fieldsOf(nested, schemas, full, depth + 1));
  }
  return rows;
}
