/**
 * CSV export with spreadsheet formula injection neutralised (OWASP "CSV
 * injection"): a text cell that starts with =, +, -, @, a tab, a carriage
 * return or a line feed (also after leading spaces, which spreadsheets skip)
 * is prefixed with a single quote, so a spreadsheet shows it as text instead
 * of evaluating it. Numbers are written as numbers (a negative number is data,
 * not a formula) and never prefixed, whether they arrive as numbers or as
 * text such as "-0.123" or "+1e-5".
 */

export type CsvCell = string | number | boolean | null | undefined;

const DANGEROUS_START = /^(?:[\t\r\n]| *[=+\-@])/;
const PLAIN_NUMBER = /^ *[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)? *$/;

/** A text cell made safe to open in a spreadsheet. */
export function neutraliseCell(text: string): string {
  return DANGEROUS_START.test(text) && !PLAIN_NUMBER.test(text) ? `'${text}` : text;
}

/** One cell, neutralised and quoted as RFC 4180 requires. */
export function csvCell(value: CsvCell): string {
  if (value === null || value === undefined) return "";
  if (typeof value === "number") return Number.isFinite(value) ? String(value) : "";
  if (typeof value === "boolean") return value ? "true" : "false";
  const safe = neutraliseCell(value);
  return /[",\r\n]/.test(safe) || safe !== safe.trim() ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/** A whole CSV document (CRLF line ends, header first). */
export function toCsv(header: readonly string[], rows: readonly (readonly CsvCell[])[]): string {
  const lines = [header.map((h) => csvCell(h)).join(",")];
  for (const row of rows) lines.push(row.map(csvCell).join(","));
  return lines.join("\r\n") + "\r\n";
}
