/**
 * Crosswalk files: a CSV of `from,to,share` rows giving, for each region of an
 * old boundary version (`from`), the share of it that lies in each region of the
 * new version (`to`), e.g. population-weighted shares from a statistics office.
 * Parsed and checked here (pure), in the report style of panel validation
 * (`IntakeProblem`: row, column, message; row numbering as `ROW_NUMBERING`).
 *
 * Rules:
 * - UTF-8 (a BOM is skipped), comma-separated, a header naming the columns
 *   `from`, `to` and `share` (any order, any case; other columns are ignored).
 * - A share is a number in (0, 1] with '.' as the decimal mark (thousands
 *   separators are refused for a share); up to 1 + `tolerance` is accepted, as
 *   computed shares of a region lying wholly in another can round to just
 *   above 1. Empty, non-numeric, negative, zero or larger shares are errors.
 * - A (from, to) pair may appear once; a repeat is an error naming both lines.
 * - Given the two versions' code lists, a code in neither list is an error; a
 *   version's code with no row is a warning (its value would reach nothing, or
 *   nothing would reach it).
 * - The shares of each source sum to 1 within `tolerance` (default
 *   {@link CROSSWALK_SHARE_TOLERANCE} = 1e-4, room for shares published with
 *   four or more decimals); otherwise an error naming the source and its lines.
 *
 * Every message names the file line (row + 1, the header being line 1) and the code.
 */
import { sniffDelimiter } from "./sniff";
import Papa from "papaparse";
import { parseNumber } from "./numbers";
import { ROW_NUMBERING, type IntakeProblem } from "./report";

export const CROSSWALK_SHARE_TOLERANCE = 1e-4;

export interface CrosswalkCsvOptions {
  /** The source version's codes; omitted: codes are not checked against a list. */
  readonly fromIds?: readonly string[];
  /** The target version's codes; omitted: not checked. */
  readonly toIds?: readonly string[];
  /** |Σ shares of a source − 1| allowed; default {@link CROSSWALK_SHARE_TOLERANCE}. */
  readonly tolerance?: number;
  /** At most this many errors and this many warnings are listed (all are counted); default 100. */
  readonly maxErrors?: number;
}

/** What kind of problem a crosswalk CSV has, for screens that group or count them. */
export type CrosswalkProblemCode =
  | "header"
  | "unknown-from"
  | "unknown-to"
  | "bad-share"
  | "duplicate-pair"
  | "shares-sum"
  | "unmatched-from"
  | "uncovered-to"
  | "csv";

/** A located problem of a crosswalk CSV (row numbering as the panel report's) with its kind. */
export interface CrosswalkCsvProblem extends IntakeProblem {
  readonly code: CrosswalkProblemCode;
}

export interface CrosswalkCsvLink {
  readonly from: string;
  readonly to: string;
  readonly share: number;
  /** The 1-based data row it came from. */
  readonly row: number;
}

export interface CrosswalkCsvReport {
  /** True when there are no errors (warnings allowed): the links can be used. */
  readonly ok: boolean;
  readonly rowNumbering: string;
  /** Data rows read (header and blank lines excluded). */
  readonly rows: number;
  readonly tolerance: number;
  /** The valid rows (first of any repeated pair), in file order. */
  readonly links: CrosswalkCsvLink[];
  readonly sources: number;
  readonly targets: number;
  readonly errors: CrosswalkCsvProblem[];
  readonly errorCount: number;
  readonly warnings: CrosswalkCsvProblem[];
  readonly warningCount: number;
  /** Source codes (of `fromIds`) with no row: their values reach no target. */
  readonly unmatchedFrom: string[];
  /** Target codes (of `toIds`) no row reaches. */
  readonly uncoveredTo: string[];
}

class Problems {
  readonly items: CrosswalkCsvProblem[] = [];
  count = 0;
  constructor(private readonly cap: number) {}
  add(code: CrosswalkProblemCode, row: number | null, column: string | null, message: string): void {
    this.count += 1;
    if (this.items.length < this.cap) this.items.push({ code, row, column, message });
  }
}

function listed(codes: readonly string[], limit = 5): string {
  const shown = codes.slice(0, limit).map((c) => `'${c}'`).join(", ");
  return codes.length > limit ? `${shown} and ${codes.length - limit} more` : shown;
}

/** "line 4" or "lines 4, 5, …": file lines of data rows. */
function lines(rows: readonly number[], limit = 6): string {
  const shown = rows.slice(0, limit).map((r) => String(r + 1)).join(", ");
  return `${rows.length === 1 ? "line" : "lines"} ${rows.length > limit ? `${shown}, …` : shown}`;
}

/**
 * Parses and checks a crosswalk CSV.
 * @example
 *   validateCrosswalkCsv("from,to,share\nA,X,0.6\nA,Y,0.4\n", { fromIds: ["A"], toIds: ["X", "Y"] }).ok; // true
 */
export function validateCrosswalkCsv(text: string, options: CrosswalkCsvOptions = {}): CrosswalkCsvReport {
  const tolerance = options.tolerance ?? CROSSWALK_SHARE_TOLERANCE;
  if (!Number.isFinite(tolerance) || tolerance < 0) throw new RangeError(`tolerance must be a non-negative number; got ${tolerance}`);
  const errors = new Problems(options.maxErrors ?? 100);
  const warnings = new Problems(options.maxErrors ?? 100);
  const body = text.replace(/^\uFEFF/, "");
  // Comma, semicolon or tab, guessed as for panel files (statistics offices publish all three).
  const parsed = Papa.parse<string[]>(body, { delimiter: sniffDelimiter(body, true).delimiter, skipEmptyLines: false });
  const [headerRow = [], ...data] = parsed.data;
  const header = headerRow.map((h) => h.trim().toLowerCase());
  const column = (name: string) => header.indexOf(name);
  const [iFrom, iTo, iShare] = [column("from"), column("to"), column("share")];
  const absent = (["from", "to", "share"] as const).filter((name) => column(name) < 0);

  const links: CrosswalkCsvLink[] = [];
  let rows = 0;
  let unmatchedFrom: string[] = [];
  let uncoveredTo: string[] = [];
  if (absent.length > 0) {
    errors.add("header", 0, null, `line 1: the header must name the columns from, to and share; missing: ${absent.join(", ")} (header: ${headerRow.join(",") || "empty"})`);
  } else {
    const fromSet = options.fromIds ? new Set(options.fromIds) : null;
    const toSet = options.toIds ? new Set(options.toIds) : null;
    const firstRowOfPair = new Map<string, number>();
    data.forEach((cells, index) => {
      const row = index + 1;
      const line = row + 1;
      if (cells.every((c) => c.trim() === "")) return;
      rows += 1;
      const from = (cells[iFrom] ?? "").trim();
      const to = (cells[iTo] ?? "").trim();
      const shareText = (cells[iShare] ?? "").trim();
      let bad = false;
      if (from === "") {
        errors.add("unknown-from", row, "from", `line ${line}: empty source code`);
        bad = true;
      } else if (fromSet && !fromSet.has(from)) {
        errors.add("unknown-from", row, "from", `line ${line}: source code '${from}' is not a region of the source boundaries`);
        bad = true;
      }
      if (to === "") {
        errors.add("unknown-to", row, "to", `line ${line}: empty target code (source '${from}')`);
        bad = true;
      } else if (toSet && !toSet.has(to)) {
        errors.add("unknown-to", row, "to", `line ${line}: target code '${to}' is not a region of the target boundaries (source '${from}')`);
        bad = true;
      }
      const number = parseNumber(shareText, ".");
      let share = NaN;
      if (number.kind !== "value" || number.groupedWithOtherMark || /[ ']/.test(shareText)) {
        errors.add("bad-share", row, "share", `line ${line}: share '${shareText}' of '${from}' → '${to}' is not a number`);
        bad = true;
      } else if (number.value <= 0 || number.value > 1 + tolerance) {
        errors.add("bad-share", row, "share", `line ${line}: share ${shareText} of '${from}' → '${to}' is ${number.value < 0 ? "negative" : number.value === 0 ? "zero (leave the row out)" : `greater than 1 (beyond the tolerance ${tolerance})`}`);
        bad = true;
      } else {
        share = number.value;
      }
      if (from !== "" && to !== "") {
        const key = `${from}\u0000${to}`;
        const earlier = firstRowOfPair.get(key);
        if (earlier !== undefined) {
          errors.add("duplicate-pair", row, null, `line ${line}: the pair '${from}' → '${to}' repeats line ${earlier + 1}`);
          return;
        }
        firstRowOfPair.set(key, row);
      }
      if (!bad) links.push({ from, to, share, row });
    });

    // Sums per source, over its valid rows; a source with a bad row is already reported.
    const bySource = new Map<string, CrosswalkCsvLink[]>();
    for (const link of links) {
      const group = bySource.get(link.from);
      if (group) group.push(link);
      else bySource.set(link.from, [link]);
    }
    const faulty = new Set(errors.items.map((e) => e.row));
    for (const [from, group] of bySource) {
      const sum = group.reduce((s, l) => s + l.share, 0);
      if (Math.abs(sum - 1) > tolerance) {
        const rowsOf = group.map((l) => l.row);
        if (rowsOf.some((r) => faulty.has(r))) continue;
        errors.add("shares-sum", rowsOf[0], "share", `source '${from}' (${lines(rowsOf)}): shares sum to ${Number(sum.toPrecision(12))}, not 1 (tolerance ${tolerance})`);
      }
    }
    const seenFrom = new Set(links.map((l) => l.from));
    const seenTo = new Set(links.map((l) => l.to));
    const noRowFrom = (options.fromIds ?? []).filter((id) => !seenFrom.has(id));
    const noRowTo = (options.toIds ?? []).filter((id) => !seenTo.has(id));
    unmatchedFrom = noRowFrom;
    uncoveredTo = noRowTo;
    if (noRowFrom.length > 0) warnings.add("unmatched-from", null, "from", `${noRowFrom.length} source code(s) have no row, so their values reach no target: ${listed(noRowFrom)}`);
    if (noRowTo.length > 0) warnings.add("uncovered-to", null, "to", `${noRowTo.length} target code(s) have no row, so nothing maps to them: ${listed(noRowTo)}`);
  }
  for (const e of parsed.errors) {
    if (e.code === "UndetectableDelimiter") continue;
    // papaparse counts rows from 0 = the header, which is this report's row numbering.
    errors.add("csv", e.row ?? null, null, `line ${e.row === undefined ? "?" : e.row + 1}: ${e.message}`);
  }
  return {
    ok: errors.count === 0,
    rowNumbering: ROW_NUMBERING,
    rows,
    tolerance,
    links,
    sources: new Set(links.map((l) => l.from)).size,
    targets: new Set(links.map((l) => l.to)).size,
    errors: errors.items,
    errorCount: errors.count,
    warnings: warnings.items,
    warningCount: warnings.count,
    unmatchedFrom,
    uncoveredTo,
  };
}
