/**
 * Harmonising values published on one boundary version onto another through a
 * crosswalk (pure). Any crosswalk will do: area-weighted (`areaCrosswalk`) or
 * one read from a statistics office's file (population-weighted shares).
 *
 * Extensive values (counts: population, employment, births) are split by share
 * and summed:
 *
 *   y_t = Σ_s share(s, t) · x_s.
 *
 * Intensive values (rates, averages, densities) are weighted means over the
 * sources that meet the target:
 *
 *   y_t = Σ_s w_st · x_s / Σ_s w_st,
 *
 * with w_st = area(s ∩ t) (`{ by: "area" }`, needs the links' `area`: the mean
 * over the covered part of t) or w_st = share(s, t) · d_s for a chosen
 * denominator indicator d (`{ by: "denominator" }`: an unemployment rate weighted
 * by the labour force that each piece carries).
 *
 * Missing values: a target is missing (null) when any source that contributes to
 * it (share > 0) has no value (or, for a denominator weighting, no denominator);
 * `missing` names the target and those sources. A partial sum would understate a
 * count and a partial mean would silently describe another area. A target no
 * source reaches is missing too (reason "uncovered"). An intensive target whose
 * weights sum to 0 (every denominator 0) is missing with reason "zero weight".
 *
 * Caution: areal weighting assumes each source's value is spread evenly over its
 * area. Where a population-weighted crosswalk exists, use it instead.
 */
import type { CrosswalkLink } from "./crosswalk";

/** How an intensive value is averaged. */
export type IntensiveWeighting =
  | { readonly by: "area" }
  | { readonly by: "denominator"; readonly values: ReadonlyMap<string, number | null> };

export type HarmoniseRule = { readonly kind: "extensive" } | { readonly kind: "intensive"; readonly weighting: IntensiveWeighting };

export interface HarmoniseOptions {
  /** Every target code to report, in this order; omitted: the targets of the links, in first-seen order. */
  readonly targets?: readonly string[];
}

export interface MissingTarget {
  readonly to: string;
  readonly reason: "missing value" | "missing denominator" | "uncovered" | "zero weight";
  /** The contributing sources at fault (empty for "uncovered" and "zero weight"). */
  readonly from: string[];
}

export interface HarmonisedValues {
  /** Target code → value (null = missing), in the order of `options.targets` or of first appearance in the links. */
  readonly values: Map<string, number | null>;
  readonly missing: MissingTarget[];
  /** Source codes with a value that no link uses (their value reaches no target). */
  readonly unusedSources: string[];
}

/** A link with the overlap area, as `areaCrosswalk` gives. */
type MaybeAreaLink = CrosswalkLink & { readonly area?: number };

/**
 * Harmonises one variable.
 * @param links the crosswalk (from, to, share; `area` too for intensive-by-area).
 * @param values source code → value (null or absent = missing).
 * @throws RangeError when intensive-by-area links lack a finite `area`, or a share is not finite.
 * Cost: O(links + sources).
 * @example
 *   harmonise(xw.pairs, new Map([["D01", 1200], ["D02", 800]]), { kind: "extensive" }).values; // Map { "N01" => 2000 }
 */
export function harmonise(
  links: readonly MaybeAreaLink[],
  values: ReadonlyMap<string, number | null>,
  rule: HarmoniseRule,
  options: HarmoniseOptions = {},
): HarmonisedValues {
  const order = options.targets ?? [...new Set(links.map((l) => l.to))];
  const numerator = new Map<string, number>();
  const weight = new Map<string, number>();
  const faults = new Map<string, { reason: MissingTarget["reason"]; from: string[] }>();
  const used = new Set<string>();

  const fault = (to: string, reason: "missing value" | "missing denominator", from: string) => {
    const f = faults.get(to);
    if (!f) faults.set(to, { reason, from: [from] });
    else if (!f.from.includes(from)) f.from.push(from);
  };

  for (const link of links) {
    if (!Number.isFinite(link.share)) throw new RangeError(`the share of ${link.from} → ${link.to} is not a finite number`);
    used.add(link.from);
    if (link.share <= 0) continue;
    const x = values.get(link.from);
    let w: number;
    if (rule.kind === "extensive") {
      w = link.share;
    } else if (rule.weighting.by === "area") {
      if (link.area === undefined || !Number.isFinite(link.area)) {
        throw new RangeError(`intensive values weighted by area need the overlap area of ${link.from} → ${link.to}; this crosswalk has shares only (weight by a denominator instead)`);
      }
      w = link.area;
    } else {
      const d = rule.weighting.values.get(link.from);
      if (d === undefined || d === null || !Number.isFinite(d)) {
        fault(link.to, "missing denominator", link.from);
        continue;
      }
      w = link.share * d;
    }
    if (x === undefined || x === null || !Number.isFinite(x)) {
      fault(link.to, "missing value", link.from);
      continue;
    }
    numerator.set(link.to, (numerator.get(link.to) ?? 0) + w * x);
    weight.set(link.to, (weight.get(link.to) ?? 0) + w);
  }

  const out = new Map<string, number | null>();
  const missing: MissingTarget[] = [];
  for (const to of order) {
    const f = faults.get(to);
    if (f) {
      out.set(to, null);
      missing.push({ to, reason: f.reason, from: f.from });
      continue;
    }
    const w = weight.get(to);
    if (w === undefined) {
      out.set(to, null);
      missing.push({ to, reason: "uncovered", from: [] });
      continue;
    }
    const num = numerator.get(to) ?? 0;
    if (rule.kind === "extensive") {
      out.set(to, num);
    } else if (w === 0) {
      out.set(to, null);
      missing.push({ to, reason: "zero weight", from: [] });
    } else {
      out.set(to, num / w);
    }
  }
  const unusedSources = [...values.entries()].filter(([id, v]) => v !== null && !used.has(id)).map(([id]) => id);
  return { values: out, missing, unusedSources };
}
