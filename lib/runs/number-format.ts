/**
 * Indicator values in words a reader takes in at a glance: as many digits as
 * the magnitude deserves, thousands separators, a true minus sign, and the
 * indicator's unit ("20,019 VMK per year", "12.3 % of labour force",
 * "€1,250"). One pure formatter for map legends, tooltips and the scatter
 * plot's axes, so no screen shows "20019.0". English (en-GB) separators.
 */

export interface ValueFormat {
  /** The indicator's unit as stored (free text: "%", "per 1,000 residents", "€", "EUR per resident"); null or "" for none. */
  readonly unit?: string | null;
  /** Significant digits below 1,000 (default 3); from 1,000 up whole numbers are shown. */
  readonly significant?: number;
}

const MINUS = "\u2212";
const SUPERSCRIPT: Record<string, string> = { "-": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };
/** Smallest magnitude written out in decimals; smaller non-zero values are written as a × 10ⁿ. */
const SMALLEST_DECIMAL = 1e-4;
/** Currency signs written before the number (€1,250); every other unit follows it. */
const CURRENCY_SIGN = /^[€$£¥₹₩₽₺]/u;

const formatters = new Map<string, Intl.NumberFormat>();
function formatter(significant: number, whole: boolean): Intl.NumberFormat {
  const key = `${significant}|${whole}`;
  let f = formatters.get(key);
  if (!f) {
    f = whole
      ? new Intl.NumberFormat("en-GB", { maximumFractionDigits: 0 })
      : new Intl.NumberFormat("en-GB", { maximumSignificantDigits: significant });
    formatters.set(key, f);
  }
  return f;
}

/** The magnitude of a finite, non-negative number as text, without sign or unit. */
function magnitude(abs: number, significant: number): string {
  if (abs === 0) return "0";
  if (abs >= 1000) return formatter(significant, true).format(abs);
  if (abs < SMALLEST_DECIMAL) {
    const [mantissa, exponent] = abs.toExponential(Math.max(0, significant - 1)).split("e");
    const digits = String(Number(exponent)).replace(/./g, (c) => SUPERSCRIPT[c] ?? c);
    return `${Number(mantissa)} × 10${digits}`;
  }
  // Rounding can carry into the thousands (999.96 → 1,000): the whole-number form then applies.
  const rounded = Number(abs.toPrecision(significant));
  return rounded >= 1000 ? formatter(significant, true).format(rounded) : formatter(significant, false).format(rounded);
}

/**
 * A value with its unit: "20,019 VMK per year", "−0.0123", "12.3 %", "€1,250 per resident".
 * Null, undefined and non-finite values are "—".
 */
export function formatValue(value: number | null | undefined, format: ValueFormat = {}): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  const significant = Math.min(21, Math.max(1, Math.round(format.significant ?? 3)));
  const text = magnitude(Math.abs(value), significant);
  const sign = value < 0 && text !== "0" ? MINUS : "";
  const unit = (format.unit ?? "").trim();
  if (!unit) return `${sign}${text}`;
  const currency = CURRENCY_SIGN.exec(unit);
  if (currency) {
    const rest = unit.slice(currency[0].length).trim();
    return `${sign}${currency[0]}${text}${rest ? ` ${rest}` : ""}`;
  }
  return `${sign}${text} ${unit}`;
}

/** An axis tick: the number alone, by the same rules (the axis name carries the unit). */
export function formatTick(value: number): string {
  return formatValue(value);
}
