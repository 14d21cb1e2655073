/**
 * Column mapping: which header is the region, the period, the indicator and the
 * value (long layout), or which columns are indicators (wide layout), and an
 * automatic suggestion from the header names.
 */
import type { ColumnMapping, PanelLayout } from "./schemas";

/** Header names are compared lower-cased with everything but letters and digits removed ("Region code" → "regioncode"). */
export function normaliseHeader(name: string): string {
  return name.toLowerCase().replace(/[^a-z0-9]/g, "");
}

// Ordered by how sure we are that the name means the role.
const REGION_NAMES = ["region", "regioncode", "regionid", "code", "districtcode", "district", "areacode", "area", "geo", "geocode", "geoid", "regionname", "unit", "id"];
const PERIOD_NAMES = ["period", "year", "time", "timeperiod", "date", "quarter", "month", "yearquarter", "yearmonth"];
const INDICATOR_NAMES = ["indicator", "indicatorcode", "indicatorid", "variable", "measure", "series", "indic", "var"];
const VALUE_NAMES = ["value", "obsvalue", "val", "observation", "obs", "amount", "figure"];

export interface MappingSuggestion {
  mapping: ColumnMapping | null;
  /** What could not be decided, in plain words (empty when the suggestion is complete). */
  notes: string[];
}

function findColumn(headers: readonly string[], names: readonly string[], taken: ReadonlySet<string>): string | null {
  const normalised = headers.map(normaliseHeader);
  for (const name of names) {
    const index = normalised.findIndex((header, i) => header === name && !taken.has(headers[i]));
    if (index >= 0) return headers[index];
  }
  return null;
}

/**
 * Suggests a mapping from the header. When `layout` is not given, the panel is
 * taken as long if both an indicator-like and a value-like column exist, else
 * as wide (every column other than region and period is an indicator).
 * @example suggestMapping(["Region", "Year", "unemployment_rate"]) // wide, indicators ["unemployment_rate"]
 */
export function suggestMapping(headers: readonly string[], layout?: PanelLayout): MappingSuggestion {
  const notes: string[] = [];
  const taken = new Set<string>();
  const region = findColumn(headers, REGION_NAMES, taken);
  if (region) taken.add(region);
  const period = findColumn(headers, PERIOD_NAMES, taken);
  if (period) taken.add(period);
  const indicator = findColumn(headers, INDICATOR_NAMES, taken);
  const value = findColumn(headers, VALUE_NAMES, indicator ? new Set([...taken, indicator]) : taken);
  const chosen: PanelLayout = layout ?? (indicator && value ? "long" : "wide");
  if (!region) notes.push(`no region column found among [${headers.join(", ")}]; name it 'region' or choose it`);
  if (!period) notes.push(`no period column found among [${headers.join(", ")}]; name it 'period' or 'year' or choose it`);
  if (chosen === "long") {
    if (!indicator) notes.push("no indicator column found; name it 'indicator' or choose it");
    if (!value) notes.push("no value column found; name it 'value' or choose it");
    if (region && period && indicator && value) {
      return { mapping: { layout: "long", region, period, indicator, value }, notes };
    }
    return { mapping: null, notes };
  }
  const indicators = headers.filter((header) => header !== region && header !== period && header.trim() !== "");
  if (indicators.length === 0) notes.push("no indicator columns left after the region and period columns");
  if (region && period && indicators.length > 0) {
    return { mapping: { layout: "wide", region, period, indicators }, notes };
  }
  return { mapping: null, notes };
}

/** The columns a mapping needs from the header, with the role of each (for error messages). */
export function requiredColumns(mapping: ColumnMapping): { column: string; role: string }[] {
  if (mapping.layout === "long") {
    return [
      { column: mapping.region, role: "region" },
      { column: mapping.period, role: "period" },
      { column: mapping.indicator, role: "indicator" },
      { column: mapping.value, role: "value" },
    ];
  }
  return [
    { column: mapping.region, role: "region" },
    { column: mapping.period, role: "period" },
    ...mapping.indicators.map((column) => ({ column, role: "indicator" })),
  ];
}
