/**
 * Whether a run's permutation test can reach significance at all, in words.
 * With R permutations the smallest two-sided pseudo p is 2/(R + 1); a
 * correction for m tests can ask for less than that, and then no result can
 * be significant however strong it is (see lib/spatial/reachable-significance
 * for the arithmetic). This module turns that into the warning of the start
 * form and the notes beside a result on the map and in the catalogue. Pure:
 * the form calls it in the browser, the map route on the server.
 */
import { reachableSignificance, type Correction, type ReachableSignificance } from "@/lib/spatial";
import { CORRECTION_LABELS, MAX_RUN_PERMUTATIONS, SEQUENTIAL_EXTREMES, type ResolvedRunParams } from "./schemas";
import type { LocalFields } from "./types";

/** Local Moran per region (one test per region with neighbours), or the run's global class (one per computed indicator-period). */
export type ReachabilityScope = "local" | "global";

export interface ReachabilityInput {
  readonly scope: ReachabilityScope;
  /** Number of tests the correction counts. */
  readonly tests: number;
  readonly permutations: number;
  readonly alpha: number;
  readonly correction: Correction;
  /** Whether the run uses (or would use) sequential p-values for the local statistics. */
  readonly sequential: boolean;
}

export interface ReachabilityWarning extends ReachableSignificance {
  readonly scope: ReachabilityScope;
  readonly tests: number;
  readonly permutations: number;
  readonly alpha: number;
  readonly correction: Correction;
  /** False when even the suggested count is more than a run may use. */
  readonly withinLimit: boolean;
  /** Full sentences for the start form. */
  readonly text: string;
  /** One short sentence for beside a result. */
  readonly note: string;
}

const count = (n: number) => n.toLocaleString("en-GB");

/** A p or threshold with three significant digits, without exponents down to 10⁻⁶. */
export function formatSmallP(p: number): string {
  const text = String(Number(p.toPrecision(3)));
  const exponent = /^(-?[\d.]+)e-(\d+)$/.exec(text);
  return exponent ? `${exponent[1]} × 10^-${exponent[2]}` : text;
}

function units(scope: ReachabilityScope, n: number): string {
  const noun = scope === "local" ? "region" : "indicator-period";
  return `${count(n)} ${noun}${n === 1 ? "" : "s"}`;
}

/**
 * The warning for a permutation test that cannot reach significance on its
 * own, or null when a lone result at the smallest p passes (nothing to say)
 * or there is nothing to test.
 *
 * @example
 *   reachabilityWarning({ scope: "local", tests: 49, permutations: 999, alpha: 0.05, correction: "bonferroni", sequential: false })?.note;
 *   // "Not reachable: with 999 permutations no region can pass Bonferroni over 49 regions (needs p ≤ 0.00102, smallest p 0.002); 9,999 permutations needed."
 */
export function reachabilityWarning(input: ReachabilityInput): ReachabilityWarning | null {
  const { scope, tests, permutations, alpha, correction } = input;
  if (!Number.isInteger(tests) || tests < 1) return null;
  const r = reachableSignificance({ permutations, tests, alpha, correction, alternative: "two-sided" });
  if (r.loneReachable) return null;
  const withinLimit = r.suggestedPermutations <= MAX_RUN_PERMUTATIONS;
  const one = scope === "local" ? "a region" : "an indicator-period";
  const each = scope === "local" ? "region" : "indicator-period";
  const smallest = formatSmallP(r.smallestP);
  const bar = formatSmallP(r.loneThreshold);
  const aboveAlpha = r.smallestP > alpha * (1 + 1e-12);
  const correctionName = correction === "none" ? "no correction" : CORRECTION_LABELS[correction];
  const barText = correction === "none" ? `p ≤ α = ${alpha}` : `p ≤ ${bar} (α = ${alpha} ÷ ${count(tests)})`;

  const sentences: string[] = [`With ${count(permutations)} permutations the smallest two-sided permutation p ${one} can get is ${smallest}.`];
  if (aboveAlpha) {
    sentences.push(`That is above α = ${alpha} itself, so no ${each} can be significant, whatever the correction.`);
  } else if (r.regionsNeeded === null) {
    sentences.push(`${correction === "bonferroni" ? "Bonferroni" : correctionName} over ${units(scope, tests)} asks ${barText}, so no ${each} can be significant, however strong the pattern.`);
  } else {
    sentences.push(
      `Under the ${correctionName} over ${units(scope, tests)}, ${one} on its own needs ${barText}; ` +
        `results can be significant only when at least ${count(r.regionsNeeded)} ${each}s all reach p = ${smallest} together.`,
    );
  }
  const needed = `${one[0].toUpperCase()}${one.slice(1)} on its own needs at least ${count(r.permutationsNeeded)} permutations`;
  sentences.push(
    withinLimit
      ? `${needed}; run ${count(r.suggestedPermutations)}.`
      : `${needed}, more than the ${count(MAX_RUN_PERMUTATIONS)} a run allows; a larger α or fewer tests would help.`,
  );
  if (scope === "local" && withinLimit) {
    sentences.push(
      input.sequential
        ? `Sequential p-values are on, so regions far from significance stop after ${SEQUENTIAL_EXTREMES} extreme draws and the extra permutations cost little.`
        : `When raising the permutations, turn on sequential p-values (Besag & Clifford): regions far from significance stop early, so the extra permutations stay cheap.`,
    );
  }

  const neededShort = withinLimit ? `${count(r.suggestedPermutations)} permutations needed` : `more than ${count(MAX_RUN_PERMUTATIONS)} permutations needed`;
  const shortName = correction === "fdr" ? "FDR" : "Bonferroni";
  let note: string;
  if (aboveAlpha) {
    note = `Not reachable: with ${count(permutations)} permutations the smallest p ${smallest} is above α = ${alpha}, so no ${each} can be significant; ${neededShort}.`;
  } else if (r.regionsNeeded === null) {
    note = `Not reachable: with ${count(permutations)} permutations no ${each} can pass ${shortName} over ${units(scope, tests)} (needs p ≤ ${bar}, smallest p ${smallest}); ${neededShort}.`;
  } else {
    note =
      `Reachable only if at least ${count(r.regionsNeeded)} ${each}s reach p = ${smallest} (${shortName} over ${units(scope, tests)}); ` +
      `${one} on its own needs ${neededShort.replace(" needed", "")}.`;
  }
  return { ...r, scope, tests, permutations, alpha, correction, withinLimit, text: sentences.join(" "), note };
}

/** Tests local Moran counted in one stored period: regions with neighbours. */
export function localTests(local: Pick<LocalFields, "cluster">): number {
  return local.cluster.reduce((n, c) => (c === "no-neighbours" ? n : n + 1), 0);
}

/** The local warning for one stored period of a run, or null. */
export function localReachability(
  params: Pick<ResolvedRunParams, "permutations" | "alpha" | "correction" | "sequentialExtremes">,
  local: Pick<LocalFields, "cluster"> | null,
): ReachabilityWarning | null {
  if (!local) return null;
  return reachabilityWarning({
    scope: "local",
    tests: localTests(local),
    permutations: params.permutations,
    alpha: params.alpha,
    correction: params.correction,
    sequential: params.sequentialExtremes !== undefined,
  });
}

/**
 * The start form's warnings for a choice: local clusters over up to `regions`
 * regions (when local statistics are on) and the run's global classes over
 * up to indicators × periods tests. Counts are upper bounds: regions without a
 * value or neighbours and periods that cannot be computed are not tested, and
 * fewer tests only lower the bar.
 */
export function startFormReachability(choice: {
  regions: number;
  indicators: number;
  periods: number;
  permutations: number;
  alpha: number;
  correction: Correction;
  local: boolean;
  sequential: boolean;
}): ReachabilityWarning[] {
  const base = { permutations: choice.permutations, alpha: choice.alpha, correction: choice.correction, sequential: choice.sequential };
  const out: ReachabilityWarning[] = [];
  const local = choice.local ? reachabilityWarning({ ...base, scope: "local", tests: choice.regions }) : null;
  if (local) out.push(local);
  const global = reachabilityWarning({ ...base, scope: "global", tests: choice.indicators * choice.periods });
  if (global) out.push(global);
  return out;
}
