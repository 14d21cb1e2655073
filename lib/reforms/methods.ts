/**
 * Pure rules of harmonisation: the default method of each indicator, the
 * steward's overrides checked against the panel, and what a crosswalk does to
 * regions (merges, splits) for the map's legend.
 */
import type { HarmonisationProvenance } from "@/models/intake-types";
import type { RateDeclaration } from "@/lib/intake/rates";
import type { CrosswalkPair } from "./engine";

export type IndicatorMethod = HarmonisationProvenance["methods"][string];
/** What a steward may choose for an indicator (rates are never chosen: they are re-derived). */
export type ChosenMethod = { kind: "extensive" } | { kind: "intensive" } | { kind: "intensive-by"; denominator: string };

/**
 * Default methods: a declared rate is re-derived from its harmonised events and
 * population (when both are in the panel); the events and population of a
 * declared rate are counts, so extensive; everything else intensive.
 */
export function defaultMethods(indicators: readonly string[], rates: readonly RateDeclaration[]): Record<string, IndicatorMethod> {
  const present = new Set(indicators);
  const counts = new Set<string>();
  const derived = new Map<string, RateDeclaration>();
  for (const r of rates) {
    if (!present.has(r.events) || !present.has(r.population)) continue;
    counts.add(r.events);
    counts.add(r.population);
    if (present.has(r.indicator)) derived.set(r.indicator, r);
  }
  const methods: Record<string, IndicatorMethod> = {};
  for (const code of indicators) {
    const rate = derived.get(code);
    if (rate) methods[code] = { kind: "rate", events: rate.events, population: rate.population };
    else methods[code] = counts.has(code) ? { kind: "extensive" } : { kind: "intensive" };
  }
  return methods;
}

/**
 * The defaults with the steward's choices applied. Returns the problem (a
 * sentence naming the indicator) instead when a choice names an indicator not
 * in the panel, overrides a re-derived rate, or weights by a missing or
 * re-derived denominator.
 */
export function resolveMethods(
  defaults: Record<string, IndicatorMethod>,
  chosen: Readonly<Record<string, ChosenMethod>>,
): { ok: true; methods: Record<string, IndicatorMethod> } | { ok: false; indicator: string; problem: string } {
  const methods = { ...defaults };
  for (const [code, method] of Object.entries(chosen)) {
    const base = defaults[code];
    if (!base) return { ok: false, indicator: code, problem: `'${code}' is not an indicator of this panel version` };
    if (base.kind === "rate") {
      return { ok: false, indicator: code, problem: `'${code}' is a declared rate: it is re-derived from harmonised '${base.events}' and '${base.population}', not averaged` };
    }
    if (method.kind === "intensive-by") {
      const denominator = defaults[method.denominator];
      if (!denominator) return { ok: false, indicator: code, problem: `the denominator '${method.denominator}' of '${code}' is not an indicator of this panel version` };
      if (method.denominator === code) return { ok: false, indicator: code, problem: `'${code}' cannot be weighted by itself` };
      if (denominator.kind === "rate") return { ok: false, indicator: code, problem: `the denominator '${method.denominator}' of '${code}' is a rate; weight by a count such as a population` };
    }
    methods[code] = method;
  }
  return { ok: true, methods };
}

export interface ReformSummary {
  /** Target regions made of two or more source regions (each with its sources). */
  merged: { to: string; from: string[] }[];
  /** Source regions divided among two or more target regions. */
  split: { from: string; to: string[] }[];
  /** Source regions carried one to one (whole into one target that takes nothing else). */
  unchanged: number;
}

/** Merges and splits a crosswalk describes (shares of at least `minShare` count). */
export function reformSummary(pairs: readonly CrosswalkPair[], minShare = 0.01): ReformSummary {
  const byTo = new Map<string, string[]>();
  const byFrom = new Map<string, string[]>();
  for (const p of pairs) {
    if (p.share < minShare) continue;
    byTo.set(p.to, [...(byTo.get(p.to) ?? []), p.from]);
    byFrom.set(p.from, [...(byFrom.get(p.from) ?? []), p.to]);
  }
  const merged = [...byTo].filter(([, from]) => from.length > 1).map(([to, from]) => ({ to, from: [...from].sort() }));
  const split = [...byFrom].filter(([, to]) => to.length > 1).map(([from, to]) => ({ from, to: [...to].sort() }));
  const unchanged = [...byFrom].filter(([, to]) => to.length === 1 && (byTo.get(to[0])?.length ?? 0) === 1).length;
  merged.sort((a, b) => a.to.localeCompare(b.to));
  split.sort((a, b) => a.from.localeCompare(b.from));
  return { merged, split, unchanged };
}

/** The periods of a harmonised version carried across the reform, and the first observed on the target geography. */
export function carriedPeriods(sourcePeriods: readonly string[], continuationPeriods: readonly string[]): { carried: string[]; firstOnTarget: string | null } {
  const continued = new Set(continuationPeriods);
  const sorted = [...continuationPeriods].sort();
  return { carried: sourcePeriods.filter((p) => !continued.has(p)), firstOnTarget: sorted[0] ?? null };
}
