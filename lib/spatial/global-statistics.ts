/**
 * The three global statistics of one variable — Moran's I, Geary's C and
 * General G — with their permutation tests run on the same relabellings.
 */
import type { PermutationOptions, SpatialWeights } from "./types";
import { weightsSums } from "./weights/summary";
import { centred, checkedValues, requireRegions } from "./internal";
import { checkPermutationCount } from "./random";
import { globalPermutationSums } from "./permutation";
import { moranResult, observedMoran, type GlobalMoranResult } from "./moran";
import { gearyResult, observedGeary, type GearyResult } from "./geary";
import { generalGResult, observedGeneralG, type GeneralGResult, type ObservedGeneralG } from "./general-g";

/** Result of {@link globalStatistics}. */
export interface GlobalStatisticsResult {
  /** As {@link globalMoran} with the same options and random source. */
  readonly moran: GlobalMoranResult;
  /** As {@link gearyC} with the same options and random source. */
  readonly geary: GearyResult;
  /** As {@link generalG} (up to rounding of the permuted values), or null when G is undefined for these values. */
  readonly generalG: GeneralGResult | null;
  /** Why General G is null (negative values, fewer than two non-zero values, self-links), else null. */
  readonly generalGProblem: string | null;
}

/**
 * Global Moran's I, Geary's C and Getis–Ord General G of one variable (see
 * {@link globalMoran}, {@link gearyC}, {@link generalG} for the formulas and
 * sources), with one shared permutation test: each of the R relabellings is
 * drawn once and all three statistics are evaluated on it, over one pass of
 * the links (see `globalPermutationSums`). Each test stays an exact
 * permutation test with p = (M + 1)/(R + 1); their Monte Carlo errors are
 * correlated with one another (the same R arrangements), which matters only
 * when the three p-values are combined.
 *
 * The relabellings are exactly those of {@link globalMoran} with the same
 * random source: Moran's I (every field) is identical to `globalMoran`, Geary's
 * C to `gearyC`, and General G to `generalG` up to the last bits of the
 * permuted values (its numerator is formed from x − x̄ here).
 *
 * @param values x, one finite number per region, aligned with `weights.ids`.
 * @param weights the weights (any transform).
 * @param options permutations (0 or 99..99,999) and a seeded random source.
 * @throws Error as {@link globalMoran} (misaligned or non-finite values, a
 *   constant variable, n < 4, no links, bad permutation options). A value
 *   set for which only General G is undefined gives `generalG: null` and the
 *   reason in `generalGProblem` instead.
 * Cost: O(n + L log k) analytically, plus O(R·(n + L/2)) for permutations —
 *   about the cost of Moran's test alone.
 * @example
 *   const { moran, geary, generalG } = globalStatistics(incomePerHead, rookW, {
 *     permutations: 999, random: createRandomSource(7) });
 *   moran.permutation?.pGreater; // the same as globalMoran(…, createRandomSource(7))
 */
export function globalStatistics(values: ArrayLike<number>, weights: SpatialWeights, options: PermutationOptions = {}): GlobalStatisticsResult {
  const x = checkedValues(values, weights);
  const n = x.length;
  requireRegions(n, 4, "Moran's I");
  const { z, sumSquares, mean } = centred(x, weights);
  const sums = weightsSums(weights);
  const moran = observedMoran(z, sumSquares, weights, sums);
  const geary = observedGeary(z, sumSquares, weights, sums);
  let generalG: ObservedGeneralG | null = null;
  let generalGProblem: string | null = null;
  try {
    generalG = observedGeneralG(x, weights, sums);
  } catch (error) {
    generalGProblem = error instanceof Error ? error.message : String(error);
  }
  const permutations = checkPermutationCount(options.permutations ?? 0);
  let crossProducts: Float64Array | null = null;
  let squaredDifferences: Float64Array | null = null;
  let shiftedCrossProducts: Float64Array | null = null;
  if (permutations > 0) {
    if (!options.random) throw new Error("A permutation test needs a seeded random source (options.random).");
    const draws = globalPermutationSums(z, weights, permutations, options.random, {
      squaredDifferences: true,
      shift: generalG === null ? undefined : mean,
    });
    crossProducts = draws.crossProducts;
    squaredDifferences = draws.squaredDifferences;
    shiftedCrossProducts = draws.shiftedCrossProducts;
  }
  return {
    moran: moranResult(n, sums, moran, crossProducts, false),
    geary: gearyResult(n, sums, geary, squaredDifferences),
    generalG: generalG === null ? null : generalGResult(n, sums, generalG, shiftedCrossProducts),
    generalGProblem,
  };
}
