import Papa from "papaparse";

/**
 * The rows of a CRLF-terminated CSV answer (RFC 4180: quoted cells may hold
 * commas, quotes and line breaks), read with papaparse as a client would.
 * Throws when the text does not end with CRLF, so a cut-off answer is not
 * read as a shorter one.
 */
export function parseCsv(text: string): string[][] {
  if (text === "") return [];
  if (!text.endsWith("\r\n")) throw new Error("CSV does not end with CRLF");
  const parsed = Papa.parse<string[]>(text.slice(0, -2), { delimiter: ",", newline: "\r\n" });
  if (parsed.errors.length) throw new Error(`CSV does not parse: ${parsed.errors[0].message} (row ${parsed.errors[0].row})`);
  return parsed.data;
}
