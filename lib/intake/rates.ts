/**
 * Rates: an indicator declared as events over population times a multiplier
 * (1 a proportion, 100 per cent, 1,000 per 1,000 …). Pure and database-free:
 * the declaration's schema and its line in a panel file, the checks a panel
 * version's rate cells get, and the rate values derived when a file carries
 * the events and the population but not the rate itself.
 *
 * A declaration in a panel file is a comment line before the header:
 *
 *   # rate: closures_per_1000 = business_closures / working_age_population * 1000
 *
 * Every problem a check finds is named by region, period and the rate's code;
 * none of them rejects the version (the rows stay, the report explains).
 */
import { z } from "zod";
import type { Observation } from "./observation";


/** The multipliers a rate may use. */
export const RATE_MULTIPLIERS = [1, 100, 1000, 10_000, 100_000] as const;
export type RateMultiplier = (typeof RATE_MULTIPLIERS)[number];

/** How a multiplier reads beside a value: "proportion", "per cent", "per 1,000". */
export function multiplierLabel(multiplier: number): string {
  if (multiplier === 1) return "proportion";
  if (multiplier === 100) return "per cent";
  return `per ${multiplier.toLocaleString("en")}`;
}

const codeSchema = (what: string) =>
  z
    .string({ error: `the ${what} indicator code must be text` })
    .trim()
    .min(1, `name the ${what} indicator`)
    .max(120, `the ${what} indicator code must have 1 to 120 characters`);

export const rateMultiplierSchema = z
  .number({ error: `the multiplier must be one of ${RATE_MULTIPLIERS.join(", ")}` })
  .refine((value): value is RateMultiplier => (RATE_MULTIPLIERS as readonly number[]).includes(value), {
    message: `the multiplier must be one of ${RATE_MULTIPLIERS.join(", ")} (1 a proportion, 100 per cent, 1000 per 1,000 …)`,
  })
  .transform((value) => value as RateMultiplier);

/** What a steward declares for a rate indicator (the indicator itself is the one being edited). */
export const rateSpecSchema = z
  .object({
    events: codeSchema("events"),
    population: codeSchema("population"),
    multiplier: rateMultiplierSchema,
  })
  .refine((v) => v.events !== v.population, { message: "the events and the population must be two different indicators", path: ["population"] });
export type RateSpec = z.infer<typeof rateSpecSchema>;

/** A rate indicator with its declaration. */
export interface RateDeclaration extends RateSpec {
  indicator: string;
}

export const rateDeclarationSchema = z
  .object({ indicator: codeSchema("rate"), events: codeSchema("events"), population: codeSchema("population"), multiplier: rateMultiplierSchema })
  .refine((v) => v.events !== v.population, { message: "the events and the population must be two different indicators", path: ["population"] });

/** Problems of one declaration against another (or itself); null when it can stand. */
export function declarationProblem(declaration: RateDeclaration, others: readonly RateDeclaration[]): string | null {
  const { indicator, events, population } = declaration;
  if (indicator === events || indicator === population) return `a rate cannot be its own events or population ('${indicator}')`;
  if (events === population) return "the events and the population must be two different indicators";
  for (const other of others) {
    if (other.indicator === indicator) continue;
    if (other.indicator === events || other.indicator === population) return `'${other.indicator}' is itself a rate; a rate's events and population are counts`;
    if (other.events === indicator || other.population === indicator) return `'${indicator}' is the events or population of the rate '${other.indicator}'; it cannot be a rate too`;
  }
  return null;
}

export function describeDeclaration(d: RateSpec & { indicator?: string }): string {
  const head = d.indicator ? `${d.indicator} = ` : "";
  return `${head}${d.events} / ${d.population} × ${d.multiplier} (${multiplierLabel(d.multiplier)})`;
}

// ---------------------------------------------------------------- the file's comment lines

/** A comment line before the header: its 1-based line in the file and its text (cleaned of spreadsheet padding). */
export interface LeadingComment {
  line: number;
  text: string;
}

/**
 * Splits the comment lines (first non-space character `#`) at the very top of
 * a decoded file from the rest. Blank lines among them go too. A spreadsheet
 * that saved the comment in a cell may have quoted it (`"# rate: …"`) and
 * padded it with empty fields (`# rate: …,,,`); both are undone.
 */
export function splitLeadingComments(text: string, complete = false): { comments: LeadingComment[]; rest: string } {
  const comments: LeadingComment[] = [];
  let position = 0;
  let line = 0;
  for (;;) {
    // The last line counts without a line break only when the text is the whole file.
    const end = nextLineEnd(text, position) ?? (complete && position < text.length ? { at: text.length, next: text.length } : null);
    if (end === null) break;
    const raw = text.slice(position, end.at);
    const cleaned = cleanCommentCell(raw);
    if (cleaned === null && raw.trim() !== "") break;
    line += 1;
    if (cleaned !== null) comments.push({ line, text: cleaned });
    position = end.next;
  }
  // Leading blank lines alone are left to the parser, as before.
  if (comments.length === 0) return { comments, rest: text };
  return { comments, rest: text.slice(position) };
}

/** The end of the line starting at `from` (only complete lines count), or null. */
function nextLineEnd(text: string, from: number): { at: number; next: number } | null {
  for (let i = from; i < text.length; i += 1) {
    const ch = text[i];
    if (ch === "\n") return { at: i, next: i + 1 };
    if (ch === "\r") return { at: i, next: text[i + 1] === "\n" ? i + 2 : i + 1 };
  }
  return null;
}

/** The comment in a raw line without its `#`, or null when the line is not a comment. */
function cleanCommentCell(raw: string): string | null {
  let s = raw.trim().replace(/[,;\t\s]+$/, "");
  if (s.startsWith('"')) {
    const close = s.lastIndexOf('"');
    if (close <= 0) return null;
    s = s.slice(1, close).replace(/""/g, '"').trim();
  }
  if (!s.startsWith("#")) return null;
  return s.slice(1).trim();
}

export type CommentParse = { kind: "rate"; declaration: RateDeclaration } | { kind: "other" } | { kind: "invalid"; message: string };

const RATE_LINE = /^rate\s*:\s*(.*)$/i;
const RATE_BODY = /^(\S+)\s*=\s*(\S+)\s*\/\s*(\S+)\s*[*×]\s*([0-9][0-9_ ,.']*)$/;

export const RATE_LINE_FORMAT = "# rate: RATE = EVENTS / POPULATION * MULTIPLIER";

/** Reads one leading comment: a rate declaration, another comment, or a rate line that cannot be read. */
export function parseComment(comment: string): CommentParse {
  const head = RATE_LINE.exec(comment.trim());
  if (!head) return { kind: "other" };
  const body = head[1].trim();
  const match = RATE_BODY.exec(body);
  if (!match) return { kind: "invalid", message: `'rate: ${body}' does not read as ${RATE_LINE_FORMAT}` };
  const [, indicator, events, population, rawMultiplier] = match;
  const digits = rawMultiplier.replace(/[_ ,.']/g, "");
  const multiplier = rateMultiplierSchema.safeParse(Number(digits));
  if (!/^\d+$/.test(digits) || !multiplier.success) {
    return { kind: "invalid", message: `the multiplier '${rawMultiplier.trim()}' must be one of ${RATE_MULTIPLIERS.join(", ")}` };
  }
  const declaration: RateDeclaration = { indicator, events, population, multiplier: multiplier.data };
  const problem = declarationProblem(declaration, []);
  if (problem) return { kind: "invalid", message: problem };
  return { kind: "rate", declaration };
}

// ---------------------------------------------------------------- checks and derived values

export type RateProblemKind = "negative-events" | "negative-population" | "missing-population" | "zero-population" | "events-exceed-population" | "rate-disagrees";

/** One problem of one rate cell. */
export interface RateProblem {
  kind: RateProblemKind;
  region: string;
  period: string;
  /** The rate indicator's code. */
  indicator: string;
  /** Data row of the cell at fault (same numbering as the report's problems), when known. */
  row: number | null;
  message: string;
}

export interface RateSummary extends RateDeclaration {
  /** Where the declaration came from: the file's comment line or the workspace's indicator record. */
  source: "file" | "workspace";
  /** True when the file has no values of the rate and they were derived from events and population. */
  derived: boolean;
  /** Derived: rate values computed; otherwise rate cells given in the file that were checked against events and population. */
  values: number;
  /** Derived: region-periods left missing (a problem, or events or population missing). */
  missing: number;
  problems: number;
}

export interface RatesReport {
  declarations: RateSummary[];
  problems: RateProblem[];
  problemCount: number;
}

/** Whether a rate given in a file agrees with events / population × multiplier at the precision the file gives it. */
export function rateAgrees(given: number, expected: number): boolean {
  const text = String(given);
  const relative = 1e-9 * Math.max(Math.abs(expected), Math.abs(given));
  if (/e/i.test(text)) return Math.abs(given - expected) <= Math.max(relative, 1e-6 * Math.abs(expected));
  const dot = text.indexOf(".");
  const decimals = dot < 0 ? 0 : text.length - dot - 1;
  // Half a unit of the last decimal the file shows (plus floating-point slack).
  return Math.abs(given - expected) <= 0.5 * 10 ** -decimals * (1 + 1e-9) + relative;
}

const show = (value: number): string => String(Number(value.toPrecision(8)));

/** Growable typed arrays for one tracked indicator: value per cell (NaN = given as missing) and its row (0 = no row). */
class Track {
  values = new Float64Array(64);
  rows = new Int32Array(64);
  set(cell: number, value: number | null, row: number): void {
    if (cell >= this.values.length) {
      let size = this.values.length;
      while (size <= cell) size *= 2;
      const values = new Float64Array(size);
      values.set(this.values);
      const rows = new Int32Array(size);
      rows.set(this.rows);
      this.values = values;
      this.rows = rows;
    }
    this.values[cell] = value === null ? Number.NaN : value;
    // Rows are 1-based; a cell without a row keeps 0. Derived cells have no row of their own.
    this.rows[cell] = Math.max(row, 1);
  }
  has(cell: number): boolean {
    return cell < this.rows.length && this.rows[cell] !== 0;
  }
  value(cell: number): number | null {
    if (!this.has(cell)) return null;
    const v = this.values[cell];
    return Number.isNaN(v) ? null : v;
  }
  row(cell: number): number | null {
    return this.has(cell) ? this.rows[cell] : null;
  }
}

/**
 * Collects the cells of every indicator a declaration names while a panel
 * streams by, then checks them and derives missing rates. Memory: two numbers
 * per region × period for each named indicator.
 */
export class RateChecker {
  private readonly tracks = new Map<string, Track>();
  private readonly cellIndex = new Map<string, number>();
  private readonly cellRegion: string[] = [];
  private readonly cellPeriod: string[] = [];

  constructor(
    private readonly declarations: readonly (RateDeclaration & { source: "file" | "workspace" })[],
    private readonly maxProblems: number,
  ) {
    for (const d of declarations) for (const code of [d.indicator, d.events, d.population]) if (!this.tracks.has(code)) this.tracks.set(code, new Track());
  }

  get active(): boolean {
    return this.tracks.size > 0;
  }

  observeAll(batch: readonly Observation[]): void {
    for (const o of batch) this.observe(o);
  }

  observe(o: Observation): void {
    const track = this.tracks.get(o.indicator);
    if (!track) return;
    const key = `${o.periodKey}\u0000${o.region}`;
    let cell = this.cellIndex.get(key);
    if (cell === undefined) {
      cell = this.cellRegion.length;
      this.cellIndex.set(key, cell);
      this.cellRegion.push(o.region);
      this.cellPeriod.push(o.periodKey);
    }
    track.set(cell, o.value, o.row);
  }

  /**
   * Checks every declaration whose events and population the file holds
   * (`fileIndicators`); derives the rate's values when the file does not hold
   * the rate. `periodOrder` orders the derived observations (then regions in
   * first-seen order).
   */
  finish(fileIndicators: ReadonlySet<string>, periodOrder: readonly string[]): { report: RatesReport; derived: Observation[] } {
    const problems: RateProblem[] = [];
    let problemCount = 0;
    const derived: Observation[] = [];
    const summaries: RateSummary[] = [];
    const periodRank = new Map(periodOrder.map((key, i) => [key, i]));
    const cells = this.cellRegion.map((_, i) => i).sort((a, b) => (periodRank.get(this.cellPeriod[a]) ?? 0) - (periodRank.get(this.cellPeriod[b]) ?? 0) || a - b);
    for (const d of this.declarations) {
      if (!fileIndicators.has(d.events) || !fileIndicators.has(d.population)) continue;
      const events = this.tracks.get(d.events) as Track;
      const population = this.tracks.get(d.population) as Track;
      const rate = this.tracks.get(d.indicator) as Track;
      const derive = !fileIndicators.has(d.indicator);
      const summary: RateSummary = { ...d, derived: derive, values: 0, missing: 0, problems: 0 };
      const add = (kind: RateProblemKind, cell: number, row: number | null, message: string) => {
        summary.problems += 1;
        problemCount += 1;
        if (problems.length < this.maxProblems) {
          const region = this.cellRegion[cell];
          const period = this.cellPeriod[cell];
          problems.push({ kind, region, period, indicator: d.indicator, row, message: `region '${region}', period ${period}, indicator '${d.indicator}': ${message}` });
        }
      };
      for (const cell of cells) {
        if (!events.has(cell) && !population.has(cell) && !rate.has(cell)) continue;
        const e = events.value(cell);
        const p = population.value(cell);
        let ok = e !== null && p !== null;
        const noRate = derive ? "; no rate derived" : "";
        if (e !== null && e < 0) {
          add("negative-events", cell, events.row(cell), `${d.events} is negative (${show(e)})${noRate}`);
          ok = false;
        }
        if (p !== null && p < 0) {
          add("negative-population", cell, population.row(cell), `${d.population} is negative (${show(p)})${noRate}`);
          ok = false;
        }
        if (e !== null && p === null) {
          add("missing-population", cell, events.row(cell), `${d.events} is ${show(e)} but ${d.population} is ${population.has(cell) ? "missing" : "not in the file"}${noRate}`);
        } else if (e !== null && p === 0) {
          add("zero-population", cell, population.row(cell), `${d.events} is ${show(e)} but ${d.population} is 0${noRate}`);
          ok = false;
        } else if (e !== null && p !== null && e >= 0 && p > 0 && e > p) {
          add("events-exceed-population", cell, events.row(cell), `${d.events} (${show(e)}) exceeds ${d.population} (${show(p)})${noRate}`);
          ok = false;
        }
        const expected = ok && e !== null && p !== null ? (e / p) * d.multiplier : null;
        if (derive) {
          if (expected !== null) summary.values += 1;
          else summary.missing += 1;
          const row = events.row(cell) ?? population.row(cell) ?? 0;
          derived.push({ region: this.cellRegion[cell], periodKey: this.cellPeriod[cell], indicator: d.indicator, value: expected, row });
          continue;
        }
        const given = rate.value(cell);
        if (given === null || expected === null) continue;
        summary.values += 1;
        if (!rateAgrees(given, expected)) {
          add("rate-disagrees", cell, rate.row(cell), `the file gives ${show(given)} but ${d.events} / ${d.population} × ${d.multiplier} is ${show(expected)}`);
        }
      }
      summaries.push(summary);
    }
    return { report: { declarations: summaries, problems, problemCount }, derived };
  }
}
