/**
 * Local Moran's I (LISA) with analytical moments under total or conditional
 * randomisation, conditional permutation inference, quadrants and clusters.
 */
import type { PermutationOptions, SpatialWeights } from "./types";
import type { Correction } from "./multiple-testing";

/** Moran scatter-plot quadrant of a region: sign of z_i, then sign of its lag. */
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
  readonly expectedIi: number | null;
  readonly varianceIi: number | null;
  readonly z: number | null;
  /** Two-sided normal p-value of z. */
  readonly p: number | null;
  /** Conditional permutation p: one-sided tails and the two-sided value. */
  readonly pseudoPGreater: number | null;
  readonly pseudoPLess: number | null;
  /** Two-sided: min(1, 2·min(pGreater, pLess)). */
  readonly pseudoP: number | null;
  readonly permutationMean: number | null;
  readonly permutationSd: number | null;
  readonly neighbours: number;
  readonly quadrant: Quadrant;
  readonly cluster: ClusterClass;
}

/** Result of {@link localMoran}. */
export interface LocalMoranResult {
  readonly n: number;
  /** m2 = Σ z² / n. */
  readonly m2: number;
  readonly moments: LocalMoments;
  readonly permutations: number;
  readonly alpha: number;
  readonly correction: Correction;
  readonly pValueSource: PValueSource;
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
  /** Which p decides the cluster class; default permutation when R > 0, else analytical. */
  readonly pValueSource?: PValueSource;
}

export function localMoran(values: ArrayLike<number>, weights: SpatialWeights, options: LocalMoranOptions = {}): LocalMoranResult {
  void values;
  void weights;
  void options;
  throw new Error("not implemented yet");
}
