/**
 * Delimiter and line-ending sniffing on the first few kilobytes of a panel.
 *
 * Economists' CSVs come from spreadsheets in many locales: comma-separated with
 * a decimal point, semicolon-separated with a decimal comma (the usual European
 * export), or tab-separated (copy-paste from a spreadsheet). The rule is simple
 * and explainable: a delimiter is plausible when the header line contains it and
 * every sampled data line contains it the same number of times (counted outside
 * quotes). A decimal comma in the values therefore never wins over the semicolon,
 * because the header has no commas.
 */

export const DELIMITERS = [",", ";", "\t"] as const;
export type Delimiter = (typeof DELIMITERS)[number];

export interface DelimiterGuess {
  delimiter: Delimiter;
  /** False when no candidate was consistent over the sample; the choice is then a fallback. */
  confident: boolean;
  /** Fields per line in the header under the chosen delimiter. */
  columns: number;
  /** A sentence saying why, for the report. */
  reason: string;
}

const DELIMITER_NAMES: Record<Delimiter, string> = { ",": "comma", ";": "semicolon", "\t": "tab" };

export function delimiterName(delimiter: Delimiter): string {
  return DELIMITER_NAMES[delimiter];
}

/** Splits a text sample into complete logical lines, keeping quoted newlines inside a line. */
export function sampleLines(sample: string, complete: boolean, maxLines = 50): string[] {
  const lines: string[] = [];
  let start = 0;
  let inQuotes = false;
  for (let i = 0; i < sample.length && lines.length < maxLines; i += 1) {
    const ch = sample[i];
    if (ch === '"') inQuotes = !inQuotes;
    else if (!inQuotes && (ch === "\n" || ch === "\r")) {
      lines.push(sample.slice(start, i));
      if (ch === "\r" && sample[i + 1] === "\n") i += 1;
      start = i + 1;
    }
  }
  // The tail of a truncated sample may be half a line; use it only when the sample is the whole file.
  if (complete && start < sample.length && lines.length < maxLines) lines.push(sample.slice(start));
  return lines.filter((line) => line.trim() !== "");
}

function countOutsideQuotes(line: string, delimiter: string): number {
  let count = 0;
  let inQuotes = false;
  for (let i = 0; i < line.length; i += 1) {
    const ch = line[i];
    if (ch === '"') inQuotes = !inQuotes;
    else if (!inQuotes && ch === delimiter) count += 1;
  }
  return count;
}

/**
 * Guesses the delimiter from a sample (the beginning of the decoded file).
 * `complete` says whether the sample is the whole file (then its last line counts).
 * Ties between consistent candidates go to the one giving more columns, then to
 * tab, semicolon, comma in that order (a tab or semicolon inside a value is rarer
 * than a comma).
 */
export function sniffDelimiter(sample: string, complete: boolean): DelimiterGuess {
  const lines = sampleLines(sample, complete);
  if (lines.length === 0) {
    return { delimiter: ",", confident: false, columns: 0, reason: "the file has no non-empty lines" };
  }
  const [header, ...data] = lines;
  const preference: Delimiter[] = ["\t", ";", ","];
  let best: { delimiter: Delimiter; count: number } | null = null;
  for (const delimiter of preference) {
    const headerCount = countOutsideQuotes(header, delimiter);
    if (headerCount === 0) continue;
    const consistent = data.every((line) => countOutsideQuotes(line, delimiter) === headerCount);
    if (consistent && (best === null || headerCount > best.count)) best = { delimiter, count: headerCount };
  }
  if (best !== null) {
    return {
      delimiter: best.delimiter,
      confident: true,
      columns: best.count + 1,
      reason: `${delimiterName(best.delimiter)}: the header and the first ${data.length} data line(s) all have ${best.count + 1} fields`,
    };
  }
  // Nothing consistent: fall back to the delimiter most frequent in the header, and say so.
  let fallback: Delimiter = ",";
  let fallbackCount = 0;
  for (const delimiter of preference) {
    const count = countOutsideQuotes(header, delimiter);
    if (count > fallbackCount) {
      fallback = delimiter;
      fallbackCount = count;
    }
  }
  return {
    delimiter: fallback,
    confident: false,
    columns: fallbackCount + 1,
    reason:
      fallbackCount === 0
        ? "no comma, semicolon or tab in the header line, so the file has a single column"
        : `no delimiter gives the same number of fields on every sampled line; using the ${delimiterName(fallback)} (most frequent in the header)`,
  };
}

/** The line ending used by the first line break outside quotes ("\n" when there is none). */
export function sniffNewline(sample: string): "\r\n" | "\n" | "\r" {
  let inQuotes = false;
  for (let i = 0; i < sample.length; i += 1) {
    const ch = sample[i];
    if (ch === '"') inQuotes = !inQuotes;
    else if (!inQuotes && ch === "\r") return sample[i + 1] === "\n" ? "\r\n" : "\r";
    else if (!inQuotes && ch === "\n") return "\n";
  }
  return "\n";
}
