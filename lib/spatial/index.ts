/**
 * Tessera statistics engine — public API.
 *
 * Pure TypeScript: no file system, no network, no database, no framework.
 * Inputs are never mutated. Randomness is passed in as a seeded
 * {@link RandomSource} (see {@link createRandomSource}); the same seed gives
 * the same result on every machine.
 *
 * Typical flow for one indicator-period:
 *
 *   const base = weightsFromTopology(topology, "queen", { object: "regions", idProperty: "code" });
 *   const prepared = prepareAnalysis(base, valuesById, { islandPolicy: "keep", transform: "row-standardised" });
 *   const global = globalMoran(prepared.values, prepared.weights, { permutations: 999, random: createRandomSource(1) });
 *   const local = localMoran(prepared.values, prepared.weights, { permutations: 999, random: createRandomSource(1),
 *     alpha: 0.05, correction: "fdr" });
 *
 * Conventions (docs/statistics.md): z_i = x_i − x̄; S0 = ΣΣ w_ij;
 * S1 = ½ ΣΣ (w_ij + w_ji)²; S2 = Σ_i (w_i· + w_·i)²; permutation
 * p = (M + 1)/(R + 1) per tail, two-sided = min(1, 2·min(greater, less)).
 *
 * The names exported here are stable; other modules and the R reference tests
 * code against them.
 */

// Types shared by everything.
export type {
  SpatialWeights,
  WeightsTransform,
  CoordinateSystem,
  RegionPoints,
  IslandPolicy,
  RandomSource,
  TailProbabilities,
  AnalyticalInference,
  PermutationSummary,
  PermutationOptions,
} from "./types";

// Randomness.
export { createRandomSource, checkPermutationCount } from "./random";

// Weights: construction.
export {
  createSpatialWeights,
  weightsFromNeighbourLists,
  weightsFromEdgeList,
  isSymmetric,
  linkWeight,
  neighbourCounts,
} from "./weights/sparse";
export type { SpatialWeightsParts, CreateWeightsOptions, WeightedEdge, EdgeListOptions } from "./weights/sparse";
export { contiguityWeights, regionCentroids, topologyRegionIds } from "./weights/topology";
export type { TopologyRegionsOptions, ContiguityOptions, CentroidOptions } from "./weights/topology";
export {
  detectCoordinateSystem,
  greatCircleDistance,
  pointDistance,
  nearestNeighbourWeights,
  smallestConnectingBand,
  distanceBandWeights,
  inverseDistanceWeights,
} from "./weights/distance";
export type { NearestNeighbourOptions, DistanceBandOptions, InverseDistanceOptions } from "./weights/distance";
export { parseWeightsSpecification, weightsFromTopology } from "./weights/specification";
export { latticeWeights } from "./weights/lattice";
export type { WeightsSpecification, WeightsFromTopologyOptions } from "./weights/specification";

// Weights: transforms, summaries, subsets.
export { binaryWeights, rowStandardisedWeights, transformWeights, withSelfLinks } from "./weights/transform";
export { weightsSums, summariseWeights, connectedComponents } from "./weights/summary";
export type { WeightsSums, WeightsSummary, NeighbourCountDistribution, ConnectedComponents } from "./weights/summary";
export { restrictWeights, applyIslandPolicy } from "./weights/subset";
export type { IslandPolicyResult } from "./weights/subset";

// Aligning a variable with the weights (missing values, islands, transform).
export { prepareAnalysis } from "./prepare";
export type { PreparedAnalysis, PreparationReport, PrepareOptions, RegionValues, DropReason } from "./prepare";

// Reference distributions.
export {
  normalUpperTail,
  normalTailProbabilities,
  chiSquareUpperTail,
  logGamma,
  regularisedUpperGamma,
  regularisedIncompleteBeta,
  studentTTwoSided,
} from "./distributions";

// Global statistics.
export { globalMoran, moranMoments } from "./moran";
export type { GlobalMoranResult, GlobalMoranOptions } from "./moran";
export { summarisePermutations } from "./permutation";
export { gearyC } from "./geary";
export type { GearyResult } from "./geary";
export { generalG } from "./general-g";
export type { GeneralGResult } from "./general-g";
export { globalStatistics } from "./global-statistics";
export type { GlobalStatisticsResult } from "./global-statistics";
export { bivariateMoran } from "./bivariate-moran";
export type { BivariateMoranResult } from "./bivariate-moran";
export { moranScatterPlot } from "./moran-scatter";
export type { MoranScatterPlot } from "./moran-scatter";

// Panels and change.
export { moranPanel, pairedMoranChangeTest, moranOfChange } from "./panel";
export type { PanelPeriod, PanelOptions, PanelPeriodResult, MoranPanelResult, MoranChangeTestResult, MoranOfChangeResult } from "./panel";

// Local statistics.
export { localMoran } from "./local-moran";
export type {
  LocalMoranResult,
  LocalMoranRegion,
  LocalMoranOptions,
  LocalMoments,
  Quadrant,
  ClusterClass,
  PValueSource,
} from "./local-moran";
export { localGetisOrd, hotSpotClasses } from "./local-getis-ord";
export type { LocalGetisOrdResult, LocalGetisOrdRegion, LocalGetisOrdOptions, HotSpotClass, HotSpotOptions, HotSpotClasses } from "./local-getis-ord";
export { adjustPValues, significantAfterCorrection } from "./multiple-testing";
export { reachableSignificance } from "./reachable-significance";
export type { ReachableSignificance, PermutationAlternative } from "./reachable-significance";
export type { Correction } from "./multiple-testing";

// Rates and transitions.
export { empiricalBayesStandardise, empiricalBayesMoran, globalEmpiricalBayesRates, localEmpiricalBayesRates } from "./empirical-bayes";
export type {
  EmpiricalBayesResult,
  EmpiricalBayesMoranResult,
  GlobalEmpiricalBayesRates,
  LocalEmpiricalBayesRates,
  LocalEmpiricalBayesOptions,
} from "./empirical-bayes";
export { transitionTable, spatialMarkov, spatialMarkovPanel, markovHomogeneity, clusterTransitions, CLUSTER_CLASSES } from "./spatial-markov";
export { chiSquareIndependence } from "./contingency";
export type { IndependenceTest } from "./contingency";
export type { TransitionTable, SpatialMarkovResult, MarkovHomogeneity, SpatialMarkovPair, SpatialMarkovPanelResult } from "./spatial-markov";

// Regression residuals: OLS, Moran's I of the residuals, LM tests.
export {
  olsFit,
  regressionDiagnostics,
  suggestModel,
  SingularDesignError,
  TooFewRegionsError,
  NonFiniteValueError,
  RANK_TOLERANCE,
} from "./regression";
export type {
  RegressionCoefficient,
  OlsFit,
  Covariate,
  ResidualMoranResult,
  LagrangeTest,
  LagrangeMultiplierTests,
  ModelSuggestion,
  RegressionDiagnostics,
} from "./regression";
