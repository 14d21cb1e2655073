/**
 * Period parsing for regional panels.
 *
 * Accepted spellings (case-insensitive, surrounding spaces ignored):
 * - years: `2019`
 * - quarters: `2019-Q3`, `2019Q3`, `2019 Q3`, `2019-q3`, `Q3 2019`, `Q3-2019`
 * - months: `2019-07`, `2019-7`, `2019/07`, `2019M07`, `2019m7`
 * A bare six-digit `201907` is refused: it is as likely an id as a month.
 * A panel holds one granularity only; mixing years and quarters is an error
 * raised by the validator, because the periods would not be comparable.
 */

export type Granularity = "year" | "quarter" | "month";

export interface Period {
  granularity: Granularity;
  year: number;
  /** Quarter 1–4, month 1–12, or 0 for a year. */
  sub: number;
  /** Canonical spelling, also the stored key: `2019`, `2019-Q3`, `2019-07`. Sorts lexicographically in time order within a granularity. */
  key: string;
  /** Human label (same as the key; kept separate so labels can change without touching stored keys). */
  label: string;
  /** Integer position in time within its granularity (year, year·4+q−1, year·12+m−1), for ordering and gaps. */
  ordinal: number;
}

export type PeriodParse = { ok: true; period: Period } | { ok: false; message: string };

// Years outside this window are almost certainly a mapped value column, not a period.
const MIN_YEAR = 1800;
const MAX_YEAR = 2200;

const YEAR = /^(\d{4})$/;
const QUARTER_AFTER = /^(\d{4})\s*[-_/ ]?\s*Q([1-4])$/i;
const QUARTER_BEFORE = /^Q([1-4])\s*[-_/ ]?\s*(\d{4})$/i;
const MONTH = /^(\d{4})(?:\s*[-/.]\s*|M)(\d{1,2})$/i;

export function yearPeriod(year: number): Period {
  const key = String(year);
  return { granularity: "year", year, sub: 0, key, label: key, ordinal: year };
}

export function quarterPeriod(year: number, quarter: number): Period {
  const key = `${year}-Q${quarter}`;
  return { granularity: "quarter", year, sub: quarter, key, label: key, ordinal: year * 4 + quarter - 1 };
}

export function monthPeriod(year: number, month: number): Period {
  const key = `${year}-${String(month).padStart(2, "0")}`;
  return { granularity: "month", year, sub: month, key, label: key, ordinal: year * 12 + month - 1 };
}

function yearInRange(year: number, text: string): PeriodParse | null {
  if (year < MIN_YEAR || year > MAX_YEAR) {
    return { ok: false, message: `period '${text}' has year ${year}, outside ${MIN_YEAR}–${MAX_YEAR}; is the period column mapped correctly?` };
  }
  return null;
}

/**
 * Parses one period cell. Never throws; a refusal carries a sentence naming the
 * text and the accepted forms.
 * @example parsePeriod("2019-Q3") // { ok: true, period: { granularity: "quarter", key: "2019-Q3", ... } }
 */
export function parsePeriod(raw: string): PeriodParse {
  const text = raw.trim();
  if (text === "") return { ok: false, message: "period is empty" };
  let match = YEAR.exec(text);
  if (match) {
    const year = Number(match[1]);
    return yearInRange(year, text) ?? { ok: true, period: yearPeriod(year) };
  }
  match = QUARTER_AFTER.exec(text);
  if (match) {
    const year = Number(match[1]);
    return yearInRange(year, text) ?? { ok: true, period: quarterPeriod(year, Number(match[2])) };
  }
  match = QUARTER_BEFORE.exec(text);
  if (match) {
    const year = Number(match[2]);
    return yearInRange(year, text) ?? { ok: true, period: quarterPeriod(year, Number(match[1])) };
  }
  match = MONTH.exec(text);
  if (match) {
    const year = Number(match[1]);
    const month = Number(match[2]);
    if (month < 1 || month > 12) return { ok: false, message: `period '${text}' has month ${month}; months run from 01 to 12` };
    return yearInRange(year, text) ?? { ok: true, period: monthPeriod(year, month) };
  }
  return {
    ok: false,
    message: `period '${text}' is not a year (2019), a quarter (2019-Q3) or a month (2019-07)`,
  };
}

/** Orders periods in time (all of one granularity). Returns a new array. */
export function sortPeriods(periods: readonly Period[]): Period[] {
  return [...periods].sort((a, b) => a.ordinal - b.ordinal);
}
