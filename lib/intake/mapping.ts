/**
 * Column mapping: which header is the region, the period, the indicator and the
 * value (long layout), which columns are indicators (wide layout), or which
 * indicator and period each column holds (wide by period), and an automatic
 * suggestion from the header names.
 */
import { parsePeriod } from "./periods";
import type { ColumnMapping, PanelLayout, PeriodColumn } from "./schemas";

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

/** Where a header column names a period: the indicator part (null when the header is only a period) and the period as written. */
export interface HeaderPeriod {
  indicator: string | null;
  period: string;
}

// Between an indicator code and a period in a header: spaces, underscores, hyphens, dots, colons.
const HEADER_SEPARATOR = /[\s_\-.:]+/g;

/**
 * Reads an indicator and a period out of one header name, for files with the
 * periods in the header: `unemployment_rate_2019`, `unemployment_rate 2019-Q3`,
 * `2019_unemployment_rate`, `Q3 2019 income`, or a bare `2019`. The period is
 * any spelling parsePeriod accepts; the longest period at either end wins, so
 * `gdp 2019-Q3` is the quarter, not the year. Null when no end is a period.
 * @example headerPeriod("unemployment_rate_2019") // { indicator: "unemployment_rate", period: "2019" }
 */
export function headerPeriod(header: string): HeaderPeriod | null {
  const name = header.trim();
  if (name === "") return null;
  if (parsePeriod(name).ok) return { indicator: null, period: name };
  const cuts = [...name.matchAll(HEADER_SEPARATOR)].map((m) => ({ start: m.index, end: m.index + m[0].length }));
  // Period at the end: try the longest tail first.
  for (const cut of cuts) {
    const head = name.slice(0, cut.start).trim();
    const tail = name.slice(cut.end).trim();
    if (head !== "" && tail !== "" && parsePeriod(tail).ok) return { indicator: head, period: tail };
  }
  // Period at the start: the longest head first.
  for (const cut of [...cuts].reverse()) {
    const head = name.slice(0, cut.start).trim();
    const tail = name.slice(cut.end).trim();
    if (head !== "" && tail !== "" && parsePeriod(head).ok) return { indicator: tail, period: head };
  }
  return null;
}

/** Options of {@link suggestMapping}. */
export interface SuggestOptions {
  /** Indicator code for header columns that name only a period (`region,2019,2020`); without it such a file gets no complete mapping. */
  periodIndicator?: string;
}

/**
 * The wide-by-period reading of a header: every column but the region's that
 * names a period. `skipped` are the other columns (labels such as a region
 * name), which are not read.
 */
export function periodColumnsOf(headers: readonly string[], region: string | null, periodIndicator?: string): { columns: PeriodColumn[]; bare: string[]; skipped: string[] } {
  const columns: PeriodColumn[] = [];
  const bare: string[] = [];
  const skipped: string[] = [];
  for (const header of headers) {
    if (header === region || header.trim() === "") continue;
    const found = headerPeriod(header);
    if (found === null) {
      skipped.push(header);
      continue;
    }
    if (found.indicator === null) bare.push(header);
    const indicator = found.indicator ?? periodIndicator?.trim() ?? "";
    columns.push({ column: header, indicator, period: found.period });
  }
  return { columns, bare, skipped };
}

/**
 * Suggests a mapping from the header. When `layout` is not given, the panel is
 * taken as long if both an indicator-like and a value-like column exist; as
 * wide by period if no column is named like a period but some headers carry a
 * period (`income_2019`, `2019`); else as wide (every column other than region
 * and period is an indicator).
 * @example suggestMapping(["Region", "Year", "unemployment_rate"]) // wide, indicators ["unemployment_rate"]
 * @example suggestMapping(["region", "income_2019", "income_2020"]) // wide-period
 */
export function suggestMapping(headers: readonly string[], layout?: PanelLayout, options: SuggestOptions = {}): MappingSuggestion {
  const notes: string[] = [];
  const taken = new Set<string>();
  const region = findColumn(headers, REGION_NAMES, taken);
  if (region) taken.add(region);
  const period = findColumn(headers, PERIOD_NAMES, taken);
  if (period) taken.add(period);
  const indicator = findColumn(headers, INDICATOR_NAMES, taken);
  const value = findColumn(headers, VALUE_NAMES, indicator ? new Set([...taken, indicator]) : taken);
  const byPeriod = periodColumnsOf(headers, region, options.periodIndicator);
  const chosen: PanelLayout = layout ?? (indicator && value ? "long" : !period && byPeriod.columns.length > 0 ? "wide-period" : "wide");
  if (!region) notes.push(`no region column found among [${headers.join(", ")}]; name it 'region' or choose it`);
  if (chosen === "wide-period") return suggestWidePeriod(region, byPeriod, options, notes);
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

function suggestWidePeriod(region: string | null, byPeriod: ReturnType<typeof periodColumnsOf>, options: SuggestOptions, notes: string[]): MappingSuggestion {
  const { columns, bare, skipped } = byPeriod;
  if (columns.length === 0) notes.push("no column header names a period (such as income_2019 or 2019)");
  if (skipped.length > 0) notes.push(`column(s) ${skipped.map((c) => `'${c}'`).join(", ")} name no period and are not read`);
  const indicatorMissing = bare.length > 0 && (options.periodIndicator ?? "").trim() === "";
  if (indicatorMissing) notes.push(`column(s) ${bare.slice(0, 5).map((c) => `'${c}'`).join(", ")}${bare.length > 5 ? " …" : ""} name only a period; give the indicator code their values belong to`);
  if (region && columns.length > 0 && !indicatorMissing) return { mapping: { layout: "wide-period", region, columns }, notes };
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
  if (mapping.layout === "wide-period") {
    return [{ column: mapping.region, role: "region" }, ...mapping.columns.map(({ column, indicator, period }) => ({ column, role: `'${indicator}' ${period}` }))];
  }
  return [
    { column: mapping.region, role: "region" },
    { column: mapping.period, role: "period" },
    ...mapping.indicators.map((column) => ({ column, role: "indicator" })),
  ];
}

/**
 * The indicator codes a file holds under a mapping, as far as `rows` show:
 * the indicator columns (wide), the columns' indicators (wide by period), or
 * the distinct cells of the indicator column in the sampled rows (long).
 */
export function fileIndicatorCodes(mapping: ColumnMapping | null, header: readonly string[], rows: readonly (readonly string[])[]): string[] {
  if (mapping === null) return [];
  if (mapping.layout === "wide") return [...new Set(mapping.indicators)];
  if (mapping.layout === "wide-period") return [...new Set(mapping.columns.map((c) => c.indicator.trim()))];
  const index = header.indexOf(mapping.indicator);
  if (index < 0) return [];
  const codes = new Set<string>();
  for (const row of rows) {
    const code = row[index]?.trim();
    if (code) codes.add(code);
  }
  return [...codes];
}

/**
 * An indicator code from a file name, for files whose header names only
 * periods (`region,2019,2020`): the name without extension, lower-cased, runs
 * of other characters as one underscore. The user can change it.
 * @example indicatorFromFileName("Unemployment rate 2019-2023.csv") // "unemployment_rate_2019_2023"
 */
export function indicatorFromFileName(fileName: string): string {
  const base = fileName.split(/[\\/]/).pop() ?? "";
  const stem = base.replace(/\.[^.]*$/, "");
  const code = stem.toLowerCase().replace(/[^a-z0-9]+/g, "_").replace(/^_+|_+$/g, "").slice(0, 120);
  return code === "" ? "indicator" : code;
}
