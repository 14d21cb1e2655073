/**
 * Local Moran's I (a local indicator of spatial association, LISA) with
 * analytical moments under total or conditional randomisation, conditional
 * permutation inference, scatter-plot quadrants and cluster classes after a
 * multiple-testing correction.
 */
import type { PermutationOptions, SpatialWeights } from "./types";
import { adjustPValues, type Correction } from "./multiple-testing";
import { centred, checkedValues, finiteOrNull, requireRegions, spatialLagInto } from "./internal";
import { normalTailProbabilities } from "./distributions";
import { checkPermutationCount } from "./random";
import { conditionalLagPermutations, sequentialExtremesOf } from "./local-permutation";

/**
 * Moran scatter-plot quadrant of a region from the sign of z_i (first letter)
 * and of its spatial lag Σ_j w_ij z_j (second letter): High-High, Low-Low,
 * High-Low, Low-High. A value exactly at the mean (or a lag exactly 0) counts
 * as High.
 */
export type Quadrant = "HH" | "LL" | "HL" | "LH";

/** Cluster class after the multiple-testing correction. */
export type ClusterClass = Quadrant | "not-significant" | "no-neighbours";

/** Which null hypothesis the analytical moments assume. */
export type LocalMoments = "conditional" | "total";

/** Which p-value decides significance of a region. */
export type PValueSource = "permutation" | "analytical";

/** One region of a {@link localMoran} result. */
export interface LocalMoranRegion {
  readonly id: string;
  /** I_i = (z_i / m2) Σ_j w_ij z_j. */
  readonly Ii: number;
  /** Spatial lag of z, Σ_j w_ij z_j. */
  readonly lag: number;
  /** E[I_i] under the chosen moments; null for a region without neighbours. */
  readonly expectedIi: number | null;
  /** Var[I_i] under the chosen moments; null for a region without neighbours. */
  readonly varianceIi: number | null;
  /** (I_i − E[I_i]) / sqrt(Var[I_i]); null when the variance is 0 or undefined. */
  readonly z: number | null;
  /** Two-sided normal p-value of z. */
  readonly p: number | null;
  /** Conditional permutation: (M≥ + 1)/(R + 1) for I_i. */
  readonly pseudoPGreater: number | null;
  /** Conditional permutation: (M≤ + 1)/(R + 1) for I_i. */
  readonly pseudoPLess: number | null;
  /** Two-sided ("folded") permutation p: min(1, 2·min(pGreater, pLess)). */
  readonly pseudoP: number | null;
  /** Mean of the permuted I_i. */
  readonly permutationMean: number | null;
  /** Sample sd of the permuted I_i. */
  readonly permutationSd: number | null;
  /**
   * Permutations this region used: R, or fewer when sequential stopping ended
   * its sampling early (its pseudo p are then Besag–Clifford's h/L); null
   * without a permutation test or without neighbours.
   */
  readonly permutationsUsed: number | null;
  /** p after the correction (of `pseudoP` or `p`, per `pValueSource`). */
  readonly adjustedP: number | null;
  /** k_i, the number of neighbours. */
  readonly neighbours: number;
  readonly quadrant: Quadrant;
  readonly cluster: ClusterClass;
}

/** Result of {@link localMoran}. */
export interface LocalMoranResult {
  readonly n: number;
  /** m2 = Σ z² / n. */
  readonly m2: number;
  /** Which analytical moments `expectedIi`/`varianceIi` are. */
  readonly moments: LocalMoments;
  /** R (0 when no permutations were run). */
  readonly permutations: number;
  readonly alpha: number;
  readonly correction: Correction;
  /** Which p decided the cluster classes. */
  readonly pValueSource: PValueSource;
  /** Number of tests m counted by the correction (regions with neighbours). */
  readonly tests: number;
  /** h of sequential stopping, or null when every region used all R permutations. */
  readonly sequentialExtremes: number | null;
  readonly regions: readonly LocalMoranRegion[];
}

/** Options of {@link localMoran}. */
export interface LocalMoranOptions extends PermutationOptions {
  /** Analytical moments: `"conditional"` (default) or `"total"` randomisation. */
  readonly moments?: LocalMoments;
  /** Significance level, 0 < alpha < 1; default 0.05. */
  readonly alpha?: number;
  /** Multiple-testing correction; default `"fdr"`. */
  readonly correction?: Correction;
  /** Which p decides the cluster class; default `"permutation"` when R > 0, else `"analytical"`. */
  readonly pValueSource?: PValueSource;
  /**
   * Sequential Monte Carlo p-values (Besag & Clifford 1991): a region stops
   * drawing once h permuted values in each tail are as extreme as its own
   * (its p is then h/L after L draws, far from significance); others use all R.
   * null or absent: every region uses all R. 10–20 is common practice.
   */
  readonly sequentialExtremes?: number | null;
}

/**
 * Local Moran's I for every region (L. Anselin 1995, "Local indicators of
 * spatial association — LISA", Geographical Analysis 27(2)):
 *
 *   I_i = (z_i / m2) Σ_j w_ij z_j,   z_i = x_i − x̄,   m2 = Σ_j z_j² / n.
 *
 * With W_i = Σ_j w_ij, w_i(2) = Σ_j w_ij², b2 = n Σz⁴/(Σz²)²:
 *
 * - total randomisation (all n values relabelled; Anselin 1995, in the form
 *   given by Sokal, Oden & Thomson 1998, Geographical Analysis 30(4)):
 *     E[I_i] = −W_i/(n−1),
 *     Var[I_i] = w_i(2)(n − b2)/(n−1) + (W_i² − w_i(2))(2b2 − n)/((n−1)(n−2)) − W_i²/(n−1)²;
 * - conditional randomisation (z_i fixed, the other n−1 values relabelled;
 *   Sokal, Oden & Thomson 1998):
 *     E[I_i] = −z_i² W_i / ((n−1) m2),
 *     Var[I_i] = (z_i/m2)² · n/(n−2) · (w_i(2) − W_i²/(n−1)) · (m2 − z_i²/(n−1)).
 *
 * The result states which moments are shown. The permutation test is
 * conditional (see `local-permutation.ts`, shared draws across regions), with
 * pseudo p per tail (M + 1)/(R + 1) and the two-sided ("folded") value
 * min(1, 2·min(pGreater, pLess)). With `sequentialExtremes` = h a region
 * whose two tails both reach h extremes after L < R draws stops there and
 * gets the sequential p-values of Besag & Clifford (1991, Biometrika 78(2)):
 * count/L per tail (one of them exactly h/L), folded as above; such a p is at
 * least 2h/R, so it never decides a cluster that the full R would call
 * clearly significant. Clusters: a region is significant when its
 * corrected p ≤ alpha; its cluster is then its quadrant.
 *
 * Regions without neighbours get I_i = 0 and null inference, cluster
 * "no-neighbours", and are not counted among the tests.
 *
 * @param values one finite number per region, aligned with `weights.ids`.
 * @param weights weights without self-links (any transform).
 * @throws Error for misaligned or non-finite values, a constant variable,
 *   n < 3, self-links, bad alpha, correction or permutation options.
 * Cost: O(n + L) analytically, plus O(R·(n + L)) for permutations.
 * @example
 *   const lisa = localMoran(values, rowStandardised, { permutations: 999,
 *     random: createRandomSource(7), alpha: 0.05, correction: "fdr" });
 *   lisa.regions.filter((r) => r.cluster === "HH").map((r) => r.id);
 */
export function localMoran(values: ArrayLike<number>, weights: SpatialWeights, options: LocalMoranOptions = {}): LocalMoranResult {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 3, "Local Moran's I");
  const moments = options.moments ?? "conditional";
  if (moments !== "conditional" && moments !== "total") {
    throw new Error(`Local moments must be "conditional" or "total"; got "${String(moments)}".`);
  }
  const alpha = options.alpha ?? 0.05;
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1; got ${String(alpha)}.`);
  const correction = options.correction ?? "fdr";
  if (correction !== "none" && correction !== "bonferroni" && correction !== "fdr") {
    throw new Error(`Correction must be "none", "bonferroni" or "fdr"; got "${String(correction)}".`);
  }
  const permutations = checkPermutationCount(options.permutations ?? 0);
  if (permutations > 0 && !options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
  const pValueSource = options.pValueSource ?? (permutations > 0 ? "permutation" : "analytical");
  if (pValueSource === "permutation" && permutations === 0) {
    throw new Error('pValueSource "permutation" needs permutations > 0.');
  }
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      if (weights.neighbours[p] === i) throw new Error(`Local Moran's I: region "${weights.ids[i]}" is linked to itself.`);
    }
  }

  const { z, sumSquares } = centred(x, weights);
  const m2 = sumSquares / n;
  let fourth = 0;
  for (let i = 0; i < n; i++) fourth += z[i] ** 4;
  const b2 = (n * fourth) / (sumSquares * sumSquares);
  const lag = spatialLagInto(weights, z, new Float64Array(n));
  const sequentialExtremes = sequentialExtremesOf(options.sequentialExtremes, permutations);
  const counts =
    permutations > 0
      ? conditionalLagPermutations(z, weights, lag, permutations, options.random as NonNullable<typeof options.random>, sequentialExtremes)
      : null;

  const partial: Omit<LocalMoranRegion, "adjustedP" | "cluster">[] = [];
  for (let i = 0; i < n; i++) {
    const k = weights.offsets[i + 1] - weights.offsets[i];
    let Wi = 0;
    let wi2 = 0;
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      Wi += weights.weights[p];
      wi2 += weights.weights[p] ** 2;
    }
    const factor = z[i] / m2;
    const Ii = factor * lag[i];
    const quadrant: Quadrant = z[i] >= 0 ? (lag[i] >= 0 ? "HH" : "HL") : lag[i] >= 0 ? "LH" : "LL";
    if (k === 0) {
      partial.push({
        id: weights.ids[i], Ii, lag: lag[i], expectedIi: null, varianceIi: null, z: null, p: null,
        pseudoPGreater: null, pseudoPLess: null, pseudoP: null, permutationMean: null, permutationSd: null,
        permutationsUsed: null, neighbours: 0, quadrant,
      });
      continue;
    }
    let expected: number;
    let variance: number;
    if (moments === "total") {
      expected = -Wi / (n - 1);
      variance =
        (wi2 * (n - b2)) / (n - 1) + ((Wi * Wi - wi2) * (2 * b2 - n)) / ((n - 1) * (n - 2)) - (Wi * Wi) / ((n - 1) * (n - 1));
    } else {
      expected = -(z[i] * z[i] * Wi) / ((n - 1) * m2);
      variance = factor * factor * (n / (n - 2)) * (wi2 - (Wi * Wi) / (n - 1)) * (m2 - (z[i] * z[i]) / (n - 1));
    }
    const zScore = variance > 0 ? (Ii - expected) / Math.sqrt(variance) : NaN;
    let pseudoPGreater: number | null = null;
    let pseudoPLess: number | null = null;
    let pseudoP: number | null = null;
    let permutationMean: number | null = null;
    let permutationSd: number | null = null;
    let permutationsUsed: number | null = null;
    if (counts) {
      // I_perm = factor · lag_perm: the upper tail of I is the upper tail of the
      // lag when factor > 0, the lower tail when factor < 0; with factor = 0
      // every permuted I equals the observed 0 (both tails count all R).
      const used = counts.draws[i];
      const greaterCount = factor > 0 ? counts.atLeast[i] : factor < 0 ? counts.atMost[i] : used;
      const lessCount = factor > 0 ? counts.atMost[i] : factor < 0 ? counts.atLeast[i] : used;
      if (used < permutations) {
        // Stopped early: Besag & Clifford's h/L (both tails have at least h extremes).
        pseudoPGreater = greaterCount / used;
        pseudoPLess = lessCount / used;
      } else {
        pseudoPGreater = (greaterCount + 1) / (permutations + 1);
        pseudoPLess = (lessCount + 1) / (permutations + 1);
      }
      permutationsUsed = used;
      pseudoP = Math.min(1, 2 * Math.min(pseudoPGreater, pseudoPLess));
      permutationMean = factor * counts.mean[i];
      permutationSd = Math.abs(factor) * counts.sd[i];
    }
    partial.push({
      id: weights.ids[i],
      Ii,
      lag: lag[i],
      expectedIi: expected,
      varianceIi: variance,
      z: finiteOrNull(zScore),
      p: Number.isFinite(zScore) ? normalTailProbabilities(zScore).pTwoSided : null,
      pseudoPGreater,
      pseudoPLess,
      pseudoP,
      permutationMean,
      permutationSd,
      permutationsUsed,
      neighbours: k,
      quadrant,
    });
  }
  const deciding = partial.map((r) => (pValueSource === "permutation" ? r.pseudoP : r.p));
  const adjusted = adjustPValues(deciding, correction);
  let tests = 0;
  const regions: LocalMoranRegion[] = partial.map((r, i) => {
    const adjustedP = adjusted[i];
    if (adjustedP !== null) tests++;
    const cluster: ClusterClass =
      r.neighbours === 0 ? "no-neighbours" : adjustedP !== null && adjustedP <= alpha ? r.quadrant : "not-significant";
    return { ...r, adjustedP, cluster };
  });
  return { n, m2, moments, permutations, alpha, correction, pValueSource, tests, sequentialExtremes, regions };
}
