/**
 * Streaming validation of a regional indicator panel (CSV, long or wide).
 *
 * The file is never read whole: bytes stream through a UTF-8 check, the first
 * 64 KiB are kept to sniff the delimiter, and papaparse parses the rest chunk by
 * chunk. Memory is bounded by the number of distinct regions × periods ×
 * indicators (a 4-byte row number per cell, used to name the first row of a
 * duplicate), never by the number of rows. Caps on distinct codes stop a
 * mis-mapped column (e.g. values taken as indicators) from exhausting memory.
 *
 * Clean observations are yielded in batches, so the database ingest can COPY
 * them while validation runs; the ingest must still discard everything if the
 * final report is not `ok` (run it in a transaction).
 */
import { Readable } from "node:stream";
import Papa from "papaparse";
import { Utf8StreamDecoder } from "./encoding";
import { parseNumber, type DecimalSeparator } from "./numbers";
import { parsePeriod, type Granularity, type Period } from "./periods";
import { requiredColumns, suggestMapping, normaliseHeader } from "./mapping";
import { panelOptionsSchema, type ColumnMapping, type PanelOptions, type PanelOptionsInput } from "./schemas";
import { delimiterName, sniffDelimiter, sniffNewline, type Delimiter } from "./sniff";
import { ROW_NUMBERING, type DuplicateExample, type IntakeProblem, type Observation, type PanelReport } from "./report";
import { RateChecker, declarationProblem, describeDeclaration, parseComment, splitLeadingComments, type LeadingComment, type RateDeclaration, type RatesReport } from "./rates";

export interface ValidatePanelInput {
  /** The raw bytes: a Node Readable (fs, S3 body) or any async iterable of chunks. */
  source: AsyncIterable<Uint8Array>;
  options?: PanelOptionsInput;
  /** Region ids of the chosen boundary object; when given, panel codes are matched against them both ways. */
  boundaryIds?: Iterable<string>;
}

/** Bytes sampled (after decoding) to sniff the delimiter and line ending. */
const SNIFF_CHARS = 64 * 1024;
/** Observations per yielded batch. */
const BATCH_SIZE = 4096;
/** Parsed rows buffered before the text stream is paused (back-pressure). */
const ROW_HIGH_WATER = 8192;
// Caps on distinct codes; beyond them the mapping is almost surely wrong.
const MAX_REGIONS = 200_000;
const MAX_PERIODS = 10_000;
const MAX_INDICATORS = 10_000;
// Encodes (indicator, period) into one Map key without string building.
const PERIOD_SLOTS = 16_384;

interface ParsedRow {
  fields: string[];
  /** papaparse's own complaint (unclosed quote…), if any. */
  problem: string | null;
}

/**
 * Parses decoded text with papaparse (step mode on a Node Readable), yielding
 * rows in batches. When the consumer falls behind, the text stream is paused;
 * papaparse then finishes its current chunk (at most ~64 KiB of rows) and waits.
 */
async function* papaRows(text: Readable, delimiter: Delimiter, newline: "\r\n" | "\n" | "\r"): AsyncGenerator<ParsedRow[]> {
  let queue: ParsedRow[] = [];
  let done = false;
  let failure: Error | null = null;
  let wake: (() => void) | null = null;
  let inputPaused = false;
  let parser: Papa.Parser | null = null;
  const notify = (): void => {
    const resolve = wake;
    wake = null;
    resolve?.();
  };
  Papa.parse<string[]>(text as unknown as NodeJS.ReadableStream & File, {
    delimiter,
    newline,
    header: false,
    skipEmptyLines: false,
    quoteChar: '"',
    step(results, handle) {
      parser = handle;
      const error = results.errors[0];
      queue.push({ fields: results.data, problem: error ? `${error.code}: ${error.message}` : null });
      if (queue.length >= ROW_HIGH_WATER && !inputPaused) {
        inputPaused = true;
        text.pause();
      }
      notify();
    },
    complete() {
      done = true;
      notify();
    },
    error(error) {
      failure = error;
      done = true;
      notify();
    },
  });
  try {
    for (;;) {
      if (queue.length > 0) {
        const batch = queue;
        queue = [];
        yield batch;
        continue;
      }
      if (failure) throw failure;
      if (done) return;
      if (inputPaused) {
        inputPaused = false;
        text.resume();
      }
      await new Promise<void>((resolve) => {
        wake = resolve;
      });
    }
  } finally {
    if (!done) {
      (parser as Papa.Parser | null)?.abort();
      text.destroy();
    }
  }
}

async function* decodeChunks(source: AsyncIterable<Uint8Array>, decoder: Utf8StreamDecoder): AsyncGenerator<string> {
  for await (const chunk of source) {
    const text = decoder.write(chunk);
    if (text !== "") yield text;
  }
  const tail = decoder.end();
  if (tail !== "") yield tail;
}

/** Collects problems with a cap on the listed ones and a complete count. */
class ProblemList {
  readonly items: IntakeProblem[] = [];
  count = 0;
  constructor(private readonly cap: number) {}
  add(row: number | null, column: string | null, message: string): void {
    this.count += 1;
    if (this.items.length < this.cap) this.items.push({ row, column, message });
  }
}

/** Growable Int32Array of first-row numbers per region index (0 = no row yet). */
function ensureCapacity(array: Int32Array, index: number): Int32Array {
  if (index < array.length) return array;
  let size = Math.max(16, array.length);
  while (size <= index) size *= 2;
  const grown = new Int32Array(size);
  grown.set(array);
  return grown;
}

class PanelState {
  readonly errors: ProblemList;
  readonly warnings: ProblemList;
  readonly options: PanelOptions;
  readonly boundaryIds: Set<string> | null;
  header: string[] = [];
  mapping: ColumnMapping | null = null;
  delimiter: Delimiter | null = null;
  delimiterDetected = false;
  rows = 0;
  blankRows = 0;
  observations = 0;
  granularity: Granularity | null = null;
  granularityRow = 0;
  granularityExample = "";
  /** Set when validation had to stop early (no usable header, caps exceeded). */
  stopped = false;
  /** Rate declarations in force (the file's, then the workspace's) and their checker; null when there are none. */
  rateDeclarations: (RateDeclaration & { source: "file" | "workspace" })[] = [];
  rateChecker: RateChecker | null = null;
  rates: RatesReport = { declarations: [], problems: [], problemCount: 0 };

  readonly regionIndex = new Map<string, number>();
  readonly regionCodes: string[] = [];
  readonly periodIndex = new Map<string, number>();
  readonly periodList: Period[] = [];
  readonly indicatorIndex = new Map<string, number>();
  readonly indicatorList: string[] = [];
  readonly unknownRegions = new Map<string, { firstRow: number; rows: number }>();
  readonly cells = new Map<number, Int32Array>();
  readonly presentPerGroup = new Map<number, number>();
  readonly duplicateExamples: DuplicateExample[] = [];
  duplicateCount = 0;
  readonly missing = new Map<number, Map<number, number>>();
  groupedWithOtherMark = 0;
  groupedExample = "";
  groupedRow = 0;
  groupedColumn = "";

  constructor(options: PanelOptions, boundaryIds: Iterable<string> | undefined) {
    this.options = options;
    this.errors = new ProblemList(options.maxErrors);
    this.warnings = new ProblemList(options.maxErrors);
    this.boundaryIds = boundaryIds ? new Set(boundaryIds) : null;
  }

  stop(row: number | null, column: string | null, message: string): void {
    this.errors.add(row, column, message);
    this.stopped = true;
  }

  /** Index of a region code, or −1 when the cap is exceeded (validation then stops). */
  region(code: string, row: number, column: string): number {
    let index = this.regionIndex.get(code);
    if (index === undefined) {
      if (this.regionCodes.length >= MAX_REGIONS) {
        this.stop(row, column, `more than ${MAX_REGIONS} distinct region codes; is the region column mapped correctly?`);
        return -1;
      }
      index = this.regionCodes.length;
      this.regionIndex.set(code, index);
      this.regionCodes.push(code);
    }
    return index;
  }

  period(period: Period, row: number, column: string): number {
    let index = this.periodIndex.get(period.key);
    if (index === undefined) {
      if (this.periodList.length >= MAX_PERIODS) {
        this.stop(row, column, `more than ${MAX_PERIODS} distinct periods; is the period column mapped correctly?`);
        return -1;
      }
      index = this.periodList.length;
      this.periodIndex.set(period.key, index);
      this.periodList.push(period);
    }
    return index;
  }

  indicator(code: string, row: number, column: string): number {
    let index = this.indicatorIndex.get(code);
    if (index === undefined) {
      if (this.indicatorList.length >= MAX_INDICATORS) {
        this.stop(row, column, `more than ${MAX_INDICATORS} distinct indicators; is the indicator column mapped correctly?`);
        return -1;
      }
      index = this.indicatorList.length;
      this.indicatorIndex.set(code, index);
      this.indicatorList.push(code);
    }
    return index;
  }

  /** Checks the granularity of a parsed period against the panel's; returns false (and records an error) on a mix. */
  sameGranularity(period: Period, raw: string, row: number, column: string): boolean {
    if (this.granularity === null) {
      this.granularity = period.granularity;
      this.granularityRow = row;
      this.granularityExample = raw.trim();
      return true;
    }
    if (period.granularity === this.granularity) return true;
    this.errors.add(
      row,
      column,
      `period '${raw.trim()}' is a ${period.granularity} but this panel's periods are ${this.granularity}s (first: '${this.granularityExample}' on row ${this.granularityRow}); a panel holds one granularity`,
    );
    return false;
  }

  /**
   * Registers a (region, period, indicator) cell. Returns the row that first gave
   * it when this is a duplicate, or 0 when the cell is new.
   */
  claimCell(regionIdx: number, periodIdx: number, indicatorIdx: number, row: number): number {
    const group = indicatorIdx * PERIOD_SLOTS + periodIdx;
    let cells = this.cells.get(group);
    if (cells !== undefined && regionIdx < cells.length && cells[regionIdx] !== 0) return cells[regionIdx];
    if (cells === undefined || regionIdx >= cells.length) {
      cells = ensureCapacity(cells ?? new Int32Array(0), regionIdx);
      this.cells.set(group, cells);
    }
    cells[regionIdx] = row;
    this.presentPerGroup.set(group, (this.presentPerGroup.get(group) ?? 0) + 1);
    return 0;
  }

  recordDuplicate(example: DuplicateExample): void {
    this.duplicateCount += 1;
    if (this.duplicateExamples.length < this.options.maxExamples) this.duplicateExamples.push(example);
  }

  countMissing(indicatorIdx: number, periodIdx: number): void {
    let perPeriod = this.missing.get(indicatorIdx);
    if (!perPeriod) {
      perPeriod = new Map();
      this.missing.set(indicatorIdx, perPeriod);
    }
    perPeriod.set(periodIdx, (perPeriod.get(periodIdx) ?? 0) + 1);
  }

  /** True when the region may be ingested; unknown codes are tallied for one message per code. */
  knownRegion(code: string, row: number): boolean {
    if (this.boundaryIds === null || this.boundaryIds.has(code)) return true;
    const seen = this.unknownRegions.get(code);
    if (seen) seen.rows += 1;
    else if (this.unknownRegions.size < MAX_REGIONS) this.unknownRegions.set(code, { firstRow: row, rows: 1 });
    return false;
  }
}

/** A column of a wide-by-period file, resolved: its position, indicator index and period index. */
interface PeriodColumnIndex {
  index: number;
  indicator: string;
  indicatorIdx: number;
  period: Period;
  periodIdx: number;
}

interface HeaderColumns {
  region: number;
  period: number;
  indicator: number;
  value: number;
  indicators: number[];
  periodColumns: PeriodColumnIndex[];
}

/** Resolves the mapping from the header; records header problems. Returns column indices or null to stop. */
function resolveHeader(state: PanelState, header: string[]): HeaderColumns | null {
  state.header = header;
  const seen = new Map<string, number>();
  header.forEach((name, index) => {
    const earlier = seen.get(name);
    if (earlier !== undefined && name !== "") {
      state.errors.add(0, name, `column '${name}' appears twice in the header (fields ${earlier + 1} and ${index + 1})`);
    } else seen.set(name, index);
  });
  const { options } = state;
  let mapping = options.mapping ?? null;
  if (mapping === null) {
    const suggestion = suggestMapping(header, options.layout, { periodIndicator: options.periodIndicator });
    if (suggestion.mapping === null) {
      state.stop(0, null, `could not map the header [${header.join(", ")}]: ${suggestion.notes.join("; ")}`);
      return null;
    }
    mapping = suggestion.mapping;
  } else if (options.layout && options.layout !== mapping.layout) {
    state.stop(null, null, `the layout '${options.layout}' contradicts the mapping's layout '${mapping.layout}'`);
    return null;
  }
  state.mapping = mapping;
  let missingColumn = false;
  for (const { column, role } of requiredColumns(mapping)) {
    if (!seen.has(column)) {
      const near = header.find((name) => normaliseHeader(name) === normaliseHeader(column));
      const hint = near !== undefined ? ` (did you mean '${near}'?)` : "";
      const single = header.length === 1 ? `; the header has a single field, so the delimiter may be wrong (${state.delimiter ? delimiterName(state.delimiter) : "unknown"} was used)` : "";
      state.errors.add(0, column, `required ${role} column '${column}' is not in the header [${header.join(", ")}]${hint}${single}`);
      missingColumn = true;
    }
  }
  if (missingColumn) {
    state.stopped = true;
    return null;
  }
  const index = (name: string): number => seen.get(name) ?? -1;
  if (mapping.layout === "long") {
    return { region: index(mapping.region), period: index(mapping.period), indicator: index(mapping.indicator), value: index(mapping.value), indicators: [], periodColumns: [] };
  }
  if (mapping.layout === "wide-period") {
    const periodColumns = resolvePeriodColumns(state, mapping.region, mapping.columns, index);
    return periodColumns === null ? null : { region: index(mapping.region), period: -1, indicator: -1, value: -1, indicators: [], periodColumns };
  }
  const used = new Set([mapping.region, mapping.period]);
  for (const column of mapping.indicators) {
    if (used.has(column)) state.errors.add(0, column, `column '${column}' is mapped twice (as region or period and as an indicator)`);
  }
  return { region: index(mapping.region), period: index(mapping.period), indicator: -1, value: -1, indicators: mapping.indicators.map(index), periodColumns: [] };
}

/**
 * The header of a wide-by-period file: each mapped column's period is parsed
 * here, once, and every problem names the header column (row 0): a period
 * that is not one, a granularity other than the first column's, a column that
 * repeats another's indicator and period, or the region column mapped again.
 */
function resolvePeriodColumns(
  state: PanelState,
  region: string,
  columns: readonly { column: string; indicator: string; period: string }[],
  index: (name: string) => number,
): PeriodColumnIndex[] | null {
  const resolved: PeriodColumnIndex[] = [];
  const seen = new Map<string, string>();
  const mappedTwice = new Set<string>();
  for (const { column, indicator, period: raw } of columns) {
    if (column === region) {
      state.errors.add(0, column, `column '${column}' is mapped twice (as the region and as a period column)`);
      continue;
    }
    if (mappedTwice.has(column)) {
      state.errors.add(0, column, `column '${column}' is mapped twice`);
      continue;
    }
    mappedTwice.add(column);
    const parsed = parsePeriod(raw);
    if (!parsed.ok) {
      state.errors.add(0, column, `header column '${column}': ${parsed.message}`);
      continue;
    }
    if (!state.sameGranularity(parsed.period, raw, 0, column)) continue;
    const code = indicator.trim();
    const key = `${code}\u0000${parsed.period.key}`;
    const earlier = seen.get(key);
    if (earlier !== undefined) {
      state.errors.add(0, column, `header columns '${earlier}' and '${column}' both hold indicator '${code}' for period ${parsed.period.key}`);
      continue;
    }
    seen.set(key, column);
    const indicatorIdx = state.indicator(code, 0, column);
    const periodIdx = state.period(parsed.period, 0, column);
    if (indicatorIdx < 0 || periodIdx < 0) return null;
    resolved.push({ index: index(column), indicator: code, indicatorIdx, period: parsed.period, periodIdx });
  }
  return resolved;
}

/**
 * Validates a panel and yields its clean observations in batches; the generator's
 * return value is the report. Never throws for bad content (every problem is in
 * the report); throws only when the byte source itself fails (I/O).
 *
 * @example
 * const it = validatePanelStream({ source: fs.createReadStream(path), boundaryIds });
 * let step = await it.next();
 * while (!step.done) { await copy(step.value); step = await it.next(); }
 * const report = step.value;
 */
export async function* validatePanelStream(input: ValidatePanelInput): AsyncGenerator<Observation[], PanelReport, void> {
  const options = panelOptionsSchema.parse(input.options ?? {});
  const state = new PanelState(options, input.boundaryIds);
  const decoder = new Utf8StreamDecoder(Math.min(options.maxErrors, 20));
  const chunks = decodeChunks(input.source, decoder)[Symbol.asyncIterator]();

  // Sample the start for sniffing, without losing it for the parser (comment lines above the header are taken off it).
  let head = "";
  let exhausted = false;
  while (head.length < SNIFF_CHARS) {
    const next = await chunks.next();
    if (next.done) {
      exhausted = true;
      break;
    }
    head += next.value;
  }
  const encodingAtStart = decoder.result();
  if (encodingAtStart.fatal !== null) {
    await chunks.return(undefined);
    state.stop(null, null, encodingAtStart.fatal);
    return buildReport(state, decoder, options.decimal);
  }
  if (exhausted && head.trim() === "") {
    state.stop(null, null, encodingAtStart.bytes === 0 ? "the file is empty" : "the file holds only blank lines");
    return buildReport(state, decoder, options.decimal);
  }
  const leading = splitLeadingComments(head, exhausted);
  if (leading.comments.length > 0) {
    head = leading.rest;
    if (exhausted && head.trim() === "") {
      state.stop(null, null, "the file holds only comment lines (#) and no header");
      return buildReport(state, decoder, options.decimal);
    }
  }
  readRateDeclarations(state, leading.comments);
  if (options.delimiter) {
    state.delimiter = options.delimiter;
  } else {
    const guess = sniffDelimiter(head, exhausted);
    state.delimiter = guess.delimiter;
    state.delimiterDetected = true;
    if (!guess.confident) state.warnings.add(null, null, `delimiter uncertain: ${guess.reason}`);
  }
  const newline = sniffNewline(head);
  const text = Readable.from(
    (async function* (): AsyncGenerator<string> {
      if (head !== "") yield head;
      if (exhausted) return;
      for (;;) {
        const next = await chunks.next();
        if (next.done) return;
        yield next.value;
      }
    })(),
  );

  let row = -1; // −1 until the header has been read; the header is row 0.
  let columns: ReturnType<typeof resolveHeader> = null;
  let batch: Observation[] = [];
  const rows = papaRows(text, state.delimiter, newline);
  try {
    for await (const parsed of rows) {
      for (const { fields, problem } of parsed) {
        row += 1;
        if (row === 0) {
          columns = resolveHeader(state, fields.map((field) => field.trim()));
          if (columns === null) break;
          continue;
        }
        if (columns === null) break;
        if (fields.length === 1 && fields[0].trim() === "") {
          state.blankRows += 1;
          continue;
        }
        state.rows += 1;
        if (problem !== null) {
          state.errors.add(row, null, `the row could not be parsed (${problem}); check the quotes`);
          continue;
        }
        if (fields.length !== state.header.length) {
          state.errors.add(row, null, `the row has ${fields.length} field(s) but the header has ${state.header.length}; it was skipped`);
          continue;
        }
        if (state.mapping?.layout === "long") longRow(state, columns, fields, row, batch);
        else if (state.mapping?.layout === "wide-period") widePeriodRow(state, columns, fields, row, batch);
        else wideRow(state, columns, fields, row, batch);
        if (state.stopped) break;
        if (batch.length >= BATCH_SIZE) {
          state.observations += batch.length;
          state.rateChecker?.observeAll(batch);
          yield batch;
          batch = [];
        }
      }
      if (state.stopped || columns === null) break;
    }
  } finally {
    // Stops papaparse and the byte source when we left early.
    await rows.return(undefined);
  }
  if (batch.length > 0) {
    state.observations += batch.length;
    state.rateChecker?.observeAll(batch);
    yield batch;
  }
  if (row === -1 && !state.stopped) state.stop(null, null, "the file has no header line");
  else if (!state.stopped && state.rows === 0) state.stop(null, null, "the file has a header but no data rows");
  if (!state.stopped && state.rateChecker !== null) {
    const derived = finishRates(state);
    for (let start = 0; start < derived.length; start += BATCH_SIZE) {
      const slice = derived.slice(start, start + BATCH_SIZE);
      state.observations += slice.length;
      yield slice;
    }
  }
  return buildReport(state, decoder, options.decimal);
}

/**
 * Reads the comment lines above the header: `# rate: …` declarations (a line
 * that cannot be read, or that contradicts another, is an error naming its
 * file line), other comments (a warning says they were not read). Then adds
 * the workspace's declarations (options.rates) for rates the file does not
 * declare itself.
 */
function readRateDeclarations(state: PanelState, comments: readonly LeadingComment[]): void {
  const fromFile: RateDeclaration[] = [];
  for (const { line, text } of comments) {
    const parsed = parseComment(text);
    if (parsed.kind === "other") {
      state.warnings.add(null, null, `file line ${line}: the comment '# ${text.slice(0, 80)}' above the header was not read (only '# rate: …' lines are)`);
      continue;
    }
    if (parsed.kind === "invalid") {
      state.errors.add(null, null, `file line ${line}: ${parsed.message}`);
      continue;
    }
    const d = parsed.declaration;
    if (fromFile.some((other) => other.indicator === d.indicator)) {
      state.errors.add(null, null, `file line ${line}: the rate '${d.indicator}' is declared twice`);
      continue;
    }
    const problem = declarationProblem(d, fromFile);
    if (problem !== null) {
      state.errors.add(null, null, `file line ${line}: ${problem}`);
      continue;
    }
    fromFile.push(d);
  }
  const declarations: (RateDeclaration & { source: "file" | "workspace" })[] = fromFile.map((d) => ({ ...d, source: "file" }));
  for (const w of state.options.rates) {
    const mine = fromFile.find((d) => d.indicator === w.indicator);
    if (mine !== undefined) {
      if (mine.events !== w.events || mine.population !== w.population || mine.multiplier !== w.multiplier) {
        state.warnings.add(
          null,
          null,
          `the file declares ${describeDeclaration(mine)} but the workspace's indicator record says ${describeDeclaration(w)}; this version is checked with the file's declaration`,
        );
      }
      continue;
    }
    // A workspace declaration that would contradict the file's is left out (the file's win for this version).
    if (declarationProblem(w, fromFile) !== null) continue;
    declarations.push({ ...w, source: "workspace" });
  }
  state.rateDeclarations = declarations;
  state.rateChecker = declarations.length > 0 ? new RateChecker(declarations, state.options.maxErrors) : null;
}

/**
 * After the last row: a file's declaration naming an indicator the file lacks
 * is an error; every declaration whose events and population are in the file
 * is checked (problems are warnings, by region, period and indicator); the
 * rates the file does not give are derived. Returns the derived observations,
 * already registered as cells of the panel.
 */
function finishRates(state: PanelState): Observation[] {
  const checker = state.rateChecker;
  if (checker === null) return [];
  const inFile = new Set(state.indicatorList);
  for (const d of state.rateDeclarations) {
    if (d.source !== "file") continue;
    const absent = [d.events, d.population].filter((code) => !inFile.has(code));
    if (absent.length > 0) {
      state.errors.add(null, null, `the file declares the rate ${describeDeclaration(d)} but has no indicator ${absent.map((c) => `'${c}'`).join(" or ")}`);
    }
  }
  const periodOrder = [...state.periodList].sort((a, b) => a.ordinal - b.ordinal).map((p) => p.key);
  const { report, derived } = checker.finish(inFile, periodOrder);
  state.rates = report;
  for (const summary of report.declarations) {
    if (summary.problems === 0) continue;
    state.warnings.add(
      null,
      summary.indicator,
      `${summary.problems} region-period(s) of the rate '${summary.indicator}' (${describeDeclaration(summary)}) have a problem; each is listed under Rates by region and period, and no row was dropped`,
    );
  }
  const kept: Observation[] = [];
  for (const o of derived) {
    const regionIdx = state.regionIndex.get(o.region);
    const periodIdx = state.periodIndex.get(o.periodKey);
    if (regionIdx === undefined || periodIdx === undefined) continue;
    const indicatorIdx = state.indicator(o.indicator, 0, o.indicator);
    if (indicatorIdx < 0) break;
    // A derived cell has no row of its own; it is filed under its events' (or population's) row.
    if (state.claimCell(regionIdx, periodIdx, indicatorIdx, Math.max(o.row, 1)) !== 0) continue;
    if (o.value === null) state.countMissing(indicatorIdx, periodIdx);
    kept.push(o);
  }
  return kept;
}

type Columns = NonNullable<ReturnType<typeof resolveHeader>>;

/** Reads the region cell; registers known codes (so a region with only bad rows still counts as present). */
function regionOf(state: PanelState, fields: string[], columns: Columns, row: number): { code: string; index: number } | null {
  const column = state.header[columns.region];
  const code = fields[columns.region].trim();
  if (code === "") {
    state.errors.add(row, column, "region code is empty");
    return null;
  }
  // −1 marks an unknown code (tallied) or the cap being hit (validation stops).
  return { code, index: state.knownRegion(code, row) ? state.region(code, row, column) : -1 };
}

function periodOf(state: PanelState, fields: string[], columns: Columns, row: number): Period | null {
  const column = state.header[columns.period];
  const raw = fields[columns.period];
  const parsed = parsePeriod(raw);
  if (!parsed.ok) {
    state.errors.add(row, column, parsed.message);
    return null;
  }
  return state.sameGranularity(parsed.period, raw, row, column) ? parsed.period : null;
}

function noteGrouping(state: PanelState, raw: string, row: number, column: string): void {
  if (state.groupedWithOtherMark === 0) {
    state.groupedExample = raw.trim();
    state.groupedRow = row;
    state.groupedColumn = column;
  }
  state.groupedWithOtherMark += 1;
}

function longRow(state: PanelState, columns: Columns, fields: string[], row: number, batch: Observation[]): void {
  const region = regionOf(state, fields, columns, row);
  const period = periodOf(state, fields, columns, row);
  const indicatorColumn = state.header[columns.indicator];
  const indicator = fields[columns.indicator].trim();
  if (indicator === "") state.errors.add(row, indicatorColumn, "indicator code is empty");
  const valueColumn = state.header[columns.value];
  const parsed = parseNumber(fields[columns.value], state.options.decimal);
  if (parsed.kind === "invalid") state.errors.add(row, valueColumn, parsed.message);
  else if (parsed.kind === "value" && parsed.groupedWithOtherMark) noteGrouping(state, fields[columns.value], row, valueColumn);

  const indicatorIdx = indicator === "" ? -1 : state.indicator(indicator, row, indicatorColumn);
  const periodIdx = period === null ? -1 : state.period(period, row, state.header[columns.period]);
  if (region === null || period === null || indicatorIdx < 0 || periodIdx < 0 || parsed.kind === "invalid" || region.index < 0) return;
  const regionIdx = region.index;
  const firstRow = state.claimCell(regionIdx, periodIdx, indicatorIdx, row);
  if (firstRow !== 0) {
    state.recordDuplicate({ region: region.code, period: period.key, indicator, firstRow, row });
    state.errors.add(row, indicatorColumn, `duplicate: region '${region.code}', period ${period.key}, indicator '${indicator}' was already given on row ${firstRow}`);
    return;
  }
  if (parsed.kind === "missing") state.countMissing(indicatorIdx, periodIdx);
  batch.push({ region: region.code, periodKey: period.key, indicator, value: parsed.kind === "value" ? parsed.value : null, row });
}

function wideRow(state: PanelState, columns: Columns, fields: string[], row: number, batch: Observation[]): void {
  const region = regionOf(state, fields, columns, row);
  const period = periodOf(state, fields, columns, row);
  const periodIdx = period === null ? -1 : state.period(period, row, state.header[columns.period]);
  const regionIdx = region === null ? -1 : region.index;
  let duplicateOf = 0;
  let duplicates = 0;
  for (const column of columns.indicators) {
    const indicator = state.header[column];
    const indicatorIdx = state.indicator(indicator, row, indicator);
    if (indicatorIdx < 0) return;
    const parsed = parseNumber(fields[column], state.options.decimal);
    if (parsed.kind === "invalid") {
      state.errors.add(row, indicator, parsed.message);
      continue;
    }
    if (parsed.kind === "value" && parsed.groupedWithOtherMark) noteGrouping(state, fields[column], row, indicator);
    if (region === null || period === null || periodIdx < 0 || regionIdx < 0) continue;
    const firstRow = state.claimCell(regionIdx, periodIdx, indicatorIdx, row);
    if (firstRow !== 0) {
      duplicateOf = firstRow;
      duplicates += 1;
      state.recordDuplicate({ region: region.code, period: period.key, indicator, firstRow, row });
      continue;
    }
    if (parsed.kind === "missing") state.countMissing(indicatorIdx, periodIdx);
    batch.push({ region: region.code, periodKey: period.key, indicator, value: parsed.kind === "value" ? parsed.value : null, row });
  }
  if (duplicates > 0 && region !== null && period !== null) {
    state.errors.add(row, null, `duplicate: region '${region.code}', period ${period.key} was already given on row ${duplicateOf} (${duplicates} indicator cell(s))`);
  }
}

/** One row of a wide-by-period file: a region, then one cell per mapped header column (indicator and period from the header). */
function widePeriodRow(state: PanelState, columns: Columns, fields: string[], row: number, batch: Observation[]): void {
  const region = regionOf(state, fields, columns, row);
  const regionIdx = region === null ? -1 : region.index;
  let duplicateOf = 0;
  let duplicates = 0;
  for (const { index, indicator, indicatorIdx, period, periodIdx } of columns.periodColumns) {
    const column = state.header[index];
    const parsed = parseNumber(fields[index], state.options.decimal);
    if (parsed.kind === "invalid") {
      state.errors.add(row, column, parsed.message);
      continue;
    }
    if (parsed.kind === "value" && parsed.groupedWithOtherMark) noteGrouping(state, fields[index], row, column);
    if (region === null || regionIdx < 0) continue;
    const firstRow = state.claimCell(regionIdx, periodIdx, indicatorIdx, row);
    if (firstRow !== 0) {
      duplicateOf = firstRow;
      duplicates += 1;
      state.recordDuplicate({ region: region.code, period: period.key, indicator, firstRow, row });
      continue;
    }
    if (parsed.kind === "missing") state.countMissing(indicatorIdx, periodIdx);
    batch.push({ region: region.code, periodKey: period.key, indicator, value: parsed.kind === "value" ? parsed.value : null, row });
  }
  if (duplicates > 0 && region !== null) {
    state.errors.add(row, state.header[columns.region], `duplicate: region '${region.code}' was already given on row ${duplicateOf} (${duplicates} cell(s))`);
  }
}

function closeMatch(code: string, ids: ReadonlySet<string>, lowerIds: Map<string, string>): string | null {
  const lower = lowerIds.get(code.toLowerCase());
  if (lower !== undefined) return lower;
  // Leading zeros lost by a spreadsheet ("7" for "007") are a classic.
  const stripped = code.replace(/^0+/, "");
  for (const width of [2, 3, 4, 5]) {
    const padded = stripped.padStart(width, "0");
    if (padded !== code && ids.has(padded)) return padded;
  }
  return null;
}

function buildReport(state: PanelState, decoder: Utf8StreamDecoder, decimal: DecimalSeparator): PanelReport {
  const encoding = decoder.result();
  // Encoding problems go first in the error list: they explain odd codes further down.
  const encodingErrors: IntakeProblem[] = encoding.problems.map((problem) => ({
    row: problem.line - 1,
    column: null,
    message: `invalid UTF-8: byte 0x${problem.byte} at byte offset ${problem.byteOffset} (file line ${problem.line}); the file is probably Windows-1252 or Latin-1 — save it as UTF-8 (CSV UTF-8)`,
  }));
  const { options } = state;
  const cap = options.maxExamples;
  const regionColumn = state.mapping?.region ?? null;

  // Unknown region codes: one problem per code, at its first row.
  const unknown = [...state.unknownRegions.entries()];
  if (unknown.length > 0 && state.boundaryIds !== null) {
    const lowerIds = new Map<string, string>();
    for (const id of state.boundaryIds) lowerIds.set(id.toLowerCase(), id);
    for (const [code, { firstRow, rows }] of unknown) {
      const near = closeMatch(code, state.boundaryIds, lowerIds);
      const hint = near !== null ? ` (did you mean '${near}'?)` : "";
      const message = `region code '${code}' is not among the boundary ids${hint}; ${rows} row(s) use it`;
      if (options.unknownRegions === "error") state.errors.add(firstRow, regionColumn, message);
      else state.warnings.add(firstRow, regionColumn, `${message}; they were dropped`);
    }
  }

  const inBoundariesNotInPanel: string[] = [];
  let notInPanelCount = 0;
  if (state.boundaryIds !== null && !state.stopped) {
    for (const id of state.boundaryIds) {
      if (!state.regionIndex.has(id)) {
        notInPanelCount += 1;
        if (inBoundariesNotInPanel.length < cap) inBoundariesNotInPanel.push(id);
      }
    }
    if (notInPanelCount > 0 && state.rows > 0) {
      state.warnings.add(
        null,
        regionColumn,
        `${notInPanelCount} boundary region(s) have no rows in the panel (e.g. ${inBoundariesNotInPanel.slice(0, 5).join(", ")}); their values will be missing`,
      );
    }
  }

  if (state.groupedWithOtherMark > 0) {
    const other = decimal === "." ? "," : ".";
    state.warnings.add(
      state.groupedRow,
      state.groupedColumn,
      `${state.groupedWithOtherMark} value(s) such as '${state.groupedExample}' were read with '${other}' as a thousands separator; if '${other}' is the decimal separator, choose decimal '${other}'`,
    );
  }

  const periodsSorted = [...state.periodList].sort((a, b) => a.ordinal - b.ordinal);
  for (let i = 1; i < periodsSorted.length; i += 1) {
    const gap = periodsSorted[i].ordinal - periodsSorted[i - 1].ordinal;
    if (gap > 1) {
      state.warnings.add(null, state.mapping && "period" in state.mapping ? state.mapping.period : null, `periods jump from ${periodsSorted[i - 1].label} to ${periodsSorted[i].label}: ${gap - 1} period(s) in between have no rows`);
    }
  }

  const missing: Record<string, number> = {};
  const missingByPeriod: Record<string, Record<string, number>> = {};
  const absent: Record<string, number> = {};
  const expectedRegions = state.boundaryIds !== null ? state.boundaryIds.size : state.regionCodes.length;
  state.indicatorList.forEach((indicator, indicatorIdx) => {
    const perPeriod = state.missing.get(indicatorIdx);
    let total = 0;
    const byPeriod: Record<string, number> = {};
    for (const period of periodsSorted) {
      const count = perPeriod?.get(state.periodIndex.get(period.key) ?? -1) ?? 0;
      if (count > 0) byPeriod[period.key] = count;
      total += count;
    }
    missing[indicator] = total;
    missingByPeriod[indicator] = byPeriod;
    let absentCells = 0;
    for (const period of periodsSorted) {
      const group = indicatorIdx * PERIOD_SLOTS + (state.periodIndex.get(period.key) ?? 0);
      absentCells += expectedRegions - (state.presentPerGroup.get(group) ?? 0);
    }
    absent[indicator] = state.stopped ? 0 : absentCells;
  });

  const inPanelNotInBoundaries = unknown.map(([code]) => code);
  const errors = [...encodingErrors, ...state.errors.items].slice(0, options.maxErrors);
  const errorCount = encoding.invalidCount + state.errors.count;
  return {
    ok: errorCount === 0 && !state.stopped,
    rowNumbering: ROW_NUMBERING,
    encoding: { name: "utf-8", bom: encoding.bom, invalidByteSequences: encoding.invalidCount },
    delimiter: state.delimiter,
    delimiterDetected: state.delimiterDetected,
    decimal,
    layout: state.mapping?.layout ?? null,
    mapping: state.mapping,
    header: state.header,
    rows: state.rows,
    blankRows: state.blankRows,
    observations: state.observations,
    granularity: state.granularity,
    regions: {
      // Only known codes are registered, so with boundary ids every registered code is a match.
      matched: state.boundaryIds === null ? null : state.regionCodes.length,
      inPanel: state.regionCodes.length + unknown.length,
      inPanelNotInBoundaries: inPanelNotInBoundaries.slice(0, cap),
      inPanelNotInBoundariesCount: inPanelNotInBoundaries.length,
      inBoundariesNotInPanel,
      inBoundariesNotInPanelCount: notInPanelCount,
    },
    periods: periodsSorted.map((period) => period.label),
    indicators: [...state.indicatorList],
    duplicates: { count: state.duplicateCount, examples: [...state.duplicateExamples] },
    missing,
    missingByPeriod,
    absent,
    errors,
    errorCount,
    warnings: state.warnings.items,
    warningCount: state.warnings.count,
    rates: state.rates,
  };
}

/**
 * Validates a panel, handing clean observations to `onObservations` in batches
 * (awaited, so a slow COPY applies back-pressure), and resolves to the report.
 */
export async function validatePanel(
  input: ValidatePanelInput & { onObservations?: (batch: readonly Observation[]) => void | Promise<void> },
): Promise<PanelReport> {
  const iterator = validatePanelStream(input);
  for (;;) {
    const step = await iterator.next();
    if (step.done) return step.value;
    if (input.onObservations) await input.onObservations(step.value);
  }
}
