/**
 * A cheap look at the start of a panel (first 64 KiB only) for the mapping
 * form: delimiter guess, header, a few sample rows and a suggested mapping.
 */
import Papa from "papaparse";
import { Utf8StreamDecoder } from "./encoding";
import { suggestMapping, type MappingSuggestion, type SuggestOptions } from "./mapping";
import type { PanelLayout } from "./schemas";
import { sniffDelimiter, sniffNewline, type DelimiterGuess } from "./sniff";
import { parseComment, splitLeadingComments, type RateDeclaration } from "./rates";

export interface PanelPreview {
  bom: boolean;
  /** Set when the sampled bytes are not valid UTF-8 (the full check happens in validation). */
  encodingProblem: string | null;
  delimiter: DelimiterGuess;
  header: string[];
  sampleRows: string[][];
  suggestion: MappingSuggestion;
  /** Rates the file declares in `# rate:` lines above the header (validation reports any it cannot read). */
  rates: RateDeclaration[];
}

const PREVIEW_BYTES = 64 * 1024;
const INDICATOR_SAMPLE_ROWS = 2000;

/**
 * Reads the first 64 KiB of `source` (then stops reading it) and suggests how
 * to read the panel.
 */
export async function readPanelHeader(source: AsyncIterable<Uint8Array>, layout?: PanelLayout, sampleSize = 5, suggest: SuggestOptions = {}): Promise<PanelPreview> {
  return (await readPanelSample(source, layout, sampleSize, suggest)).preview;
}

/** {@link readPanelHeader}, also handing back every row parsed in the window (up to 2,000), e.g. to read a long file's indicator codes. */
export async function readPanelSample(
  source: AsyncIterable<Uint8Array>,
  layout?: PanelLayout,
  sampleSize = 5,
  suggest: SuggestOptions = {},
): Promise<{ preview: PanelPreview; rows: string[][] }> {
  const decoder = new Utf8StreamDecoder(1);
  let text = "";
  let bytes = 0;
  let complete = true;
  for await (const chunk of source) {
    text += decoder.write(chunk);
    bytes += chunk.length;
    if (bytes >= PREVIEW_BYTES) {
      // Leaving the loop early ends (destroys) a Node stream source.
      complete = false;
      break;
    }
  }
  if (complete) text += decoder.end();
  const encoding = decoder.result();
  const problem = encoding.problems[0];
  const encodingProblem =
    encoding.fatal ?? (problem ? `invalid UTF-8: byte 0x${problem.byte} at byte offset ${problem.byteOffset} (file line ${problem.line})` : null);
  // Comment lines above the header (rate declarations) are not part of the table.
  const leading = splitLeadingComments(text, complete);
  text = leading.rest;
  const rates = leading.comments.flatMap(({ text: comment }) => {
    const parsed = parseComment(comment);
    return parsed.kind === "rate" ? [parsed.declaration] : [];
  });
  const delimiter = sniffDelimiter(text, complete);
  const parsed = Papa.parse<string[]>(text, {
    delimiter: delimiter.delimiter,
    newline: sniffNewline(text),
    // More rows than shown: a long file's indicator codes are read from them (all within the 64 KiB window).
    preview: Math.max(sampleSize, INDICATOR_SAMPLE_ROWS) + 1,
    skipEmptyLines: true,
  });
  const [headerRow = [], ...rows] = parsed.data;
  const header = headerRow.map((field) => field.trim());
  const preview: PanelPreview = {
    bom: encoding.bom,
    encodingProblem,
    delimiter,
    header,
    // The last sampled row may be cut by the 64 KiB window only when it is the very end; preview stops well before.
    sampleRows: rows.slice(0, sampleSize),
    suggestion: suggestMapping(header, layout, suggest),
    rates,
  };
  // A last row cut by the 64 KiB window would add a half-written code; drop it when the file goes on.
  return { preview, rows: complete ? rows : rows.slice(0, -1) };
}
