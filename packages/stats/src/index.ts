// Entry point of @counterpoise/stats. Each engineer adds only their own export lines.

// Balance, propensity and allocation
export { summarize, type Summary, type SummaryMethods } from './summarize/summarize.js';
export {
  standardizedMeanDifference,
  standardizedMeanDifferenceFromSummaries,
  type SmdKind,
  type SmdOptions,
  type ArmSummary,
} from './standardizedMeanDifference/standardizedMeanDifference.js';
export { categoricalSmd, type Level } from './categoricalSmd/categoricalSmd.js';
export { varianceRatio, type ArmWeights } from './varianceRatio/varianceRatio.js';
export { smdChanceBand, SMD_CHANCE_APPROXIMATION, type SmdChanceBand } from './smdChanceBand/smdChanceBand.js';
export { expectedChanceExceedances, type ChanceExceedances } from './expectedChanceExceedances/expectedChanceExceedances.js';
export { createAccumulator, MomentAccumulator, type AccumulatorState } from './createAccumulator/createAccumulator.js';
export {
  logisticRegression,
  SeparationError,
  ConvergenceError,
  type LogisticOptions,
  type LogisticResult,
} from './logisticRegression/logisticRegression.js';
export { propensityWeights, type Estimand, type PropensityWeightOptions, type PropensityWeights } from './propensityWeights/propensityWeights.js';
export { effectiveSampleSize } from './effectiveSampleSize/effectiveSampleSize.js';
export { createRng, type Rng, type RngState } from './createRng/createRng.js';
export {
  permutedBlockSequence,
  type PermutedBlockOptions,
  type PermutedBlockList,
  type BlockAssignment,
} from './permutedBlockSequence/permutedBlockSequence.js';
export {
  minimizationAssign,
  type MinimizationInput,
  type MinimizationDecision,
  type ImbalanceMeasure,
} from './minimizationAssign/minimizationAssign.js';
export { ALLOCATION_ALGORITHM_VERSION, type AllocationAlgorithm } from './allocationAlgorithmVersion/allocationAlgorithmVersion.js';

// Distributions, least squares, ANOVA, ANCOVA and assumption checks
export {
  fCdfUpper,
  fQuantile,
  tCdf,
  tTwoSidedP,
  tQuantile,
  normalCdf,
  normalCdfUpper,
  normalQuantile,
  chiSquareCdfUpper,
  chiSquareQuantile,
} from './distributions/distributions.js';
export {
  leastSquares,
  sequentialSSForOrder,
  typeThreeSS,
  hc3Covariance,
  CollinearColumnError,
  type LeastSquaresInput,
  type LeastSquaresFit,
  type Hc3Result,
} from './leastSquares/leastSquares.js';
export { oneWayAnova, type OneWayAnovaResult } from './oneWayAnova/oneWayAnova.js';
export { ancova, type AncovaResult, type AncovaTerm } from './ancova/ancova.js';
export type { AncovaInput, GroupLabel } from './ancova/ancovaDesign.js';
export { slopeHomogeneityTest, type SlopeHomogeneityResult } from './slopeHomogeneityTest/slopeHomogeneityTest.js';
export { leveneTest, type LeveneCenter, type LeveneResult } from './leveneTest/leveneTest.js';
export { sdRatioRule, type SdRatioResult } from './sdRatioRule/sdRatioRule.js';
export { shapiroWilk, type ShapiroWilkResult } from './shapiroWilk/shapiroWilk.js';

// Contingency tables (baseline p-values for binary and categorical covariates)
export {
  chiSquareIndependence,
  SMALL_EXPECTED_COUNT,
  type ChiSquareIndependenceResult,
} from './chiSquareIndependence/chiSquareIndependence.js';
export { fisherExact2x2, type FisherExactResult } from './fisherExact2x2/fisherExact2x2.js';
