/**
 * Number parsing with a chosen decimal separator.
 *
 * Rules (what a regional economist expects from spreadsheet exports):
 * - The decimal separator is chosen, never guessed per cell: '.' or ','.
 * - Thousands separators are accepted only in well-formed groups of three digits:
 *   with decimal '.', `1,234,567.5`, `1 234 567.5` and `1'234'567.5`;
 *   with decimal ',', `1.234.567,5`, `1 234 567,5` and `1'234'567,5`.
 *   Non-breaking and thin spaces count as spaces.
 * - Missing markers are missing (counted by the validator, never read as zero):
 *   the empty cell, NA, N/A, NaN, null, "..", "...", ".", "-", "–", "—", ":", "x".
 * - Anything else is an error whose message says what was wrong, with a hint
 *   when the cell looks like the other decimal convention or carries a unit.
 */

export type DecimalSeparator = "." | ",";

export type NumberParse =
  | { kind: "value"; value: number; /** true when a thousands separator equal to the other decimal mark was used, e.g. '1,234' with decimal '.' */ groupedWithOtherMark: boolean }
  | { kind: "missing" }
  | { kind: "invalid"; message: string };

const MISSING_TOKENS = new Set(["", "na", "n/a", "n.a.", "nan", "null", "..", "...", ".", "-", "–", "—", ":", "x"]);

/** Whether a trimmed cell is one of the accepted missing-value markers. */
export function isMissingToken(text: string): boolean {
  return MISSING_TOKENS.has(text.trim().toLowerCase());
}

// Any kind of space a spreadsheet may put between digit groups.
const SPACES = /[\u0020\u00a0\u2007\u2009\u202f]/g;

const EXPONENT = "(?:[eE][+-]?\\d+)?";
const POINT_DECIMAL = new RegExp(`^[+-]?(?:\\d+|\\d{1,3}(?:,\\d{3})+|\\d{1,3}(?: \\d{3})+|\\d{1,3}(?:'\\d{3})+)?(?:\\.\\d+)?${EXPONENT}$`);
const COMMA_DECIMAL = new RegExp(`^[+-]?(?:\\d+|\\d{1,3}(?:\\.\\d{3})+|\\d{1,3}(?: \\d{3})+|\\d{1,3}(?:'\\d{3})+)?(?:,\\d+)?${EXPONENT}$`);

/**
 * Parses one value cell.
 * @example parseNumber("1.234,5", ",") // { kind: "value", value: 1234.5, groupedWithOtherMark: true }
 * @example parseNumber("..", ".")      // { kind: "missing" }
 */
export function parseNumber(raw: string, decimal: DecimalSeparator): NumberParse {
  const trimmed = raw.replace(/^[\s\u00a0\u2007\u2009\u202f]+|[\s\u00a0\u2007\u2009\u202f]+$/g, "");
  if (MISSING_TOKENS.has(trimmed.toLowerCase())) return { kind: "missing" };
  // A typographic minus (U+2212) is a minus sign; normalise before matching.
  const text = trimmed.replace(/^\u2212/, "-").replace(SPACES, " ");
  const pattern = decimal === "." ? POINT_DECIMAL : COMMA_DECIMAL;
  if (hasMantissaDigit(text) && pattern.test(text)) {
    const other = decimal === "." ? "," : ".";
    const groupedWithOtherMark = text.includes(other);
    const plain = decimal === "." ? text.replace(/[, ']/g, "") : text.replace(/[. ']/g, "").replace(",", ".");
    const value = Number(plain);
    if (Number.isFinite(value)) return { kind: "value", value, groupedWithOtherMark };
    return { kind: "invalid", message: `'${trimmed}' is too large to be a finite number` };
  }
  return { kind: "invalid", message: invalidMessage(trimmed, decimal) };
}

/** The mantissa (before any exponent) must hold a digit, so 'e5' is refused. */
function hasMantissaDigit(text: string): boolean {
  return /\d/.test(text.split(/[eE]/)[0]);
}

function invalidMessage(text: string, decimal: DecimalSeparator): string {
  const base = `'${text}' is not a number`;
  if (/%\s*$/.test(text)) return `${base}: remove the % sign (give 12.5 for 12.5 %)`;
  // A unit is two or more letters or a currency sign before or after the digits ('e5' is not a unit).
  if (/^[+-]?[\d.,\s']*\d[\d.,\s']*\s*(?:[A-Za-z]{2,}|[€$£¥])$|^(?:[A-Za-z]{2,}|[€$£¥])\s*[+-]?[\d.,\s']*\d/.test(text)) {
    return `${base}: remove the unit or currency from the value`;
  }
  const otherDecimal = decimal === "." ? "," : ".";
  const otherPattern = decimal === "." ? COMMA_DECIMAL : POINT_DECIMAL;
  if (hasMantissaDigit(text) && otherPattern.test(text)) {
    return `${base} with '${decimal}' as the decimal separator; it looks like '${otherDecimal}' is the decimal separator (choose decimal '${otherDecimal}')`;
  }
  return `${base} (decimal separator '${decimal}'; missing values may be empty, NA, '..' or '-')`;
}
