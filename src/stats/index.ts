/**
 * Public surface of the statistics core: pure functions, numbers in, numbers out.
 * Each export is listed by name so that the API is visible here in one place.
 */
export { StatsInputError } from './errors.js';
export { computed, notComputable } from './result.js';
export type { EstimateWithInterval, Interval, Outcome } from './result.js';

export {
  chiSquarePdf,
  hypergeometricCdf,
  hypergeometricPmf,
  noncentralTProbability,
  standardNormalCdf,
  standardNormalPdf,
  standardNormalQuantile,
  standardNormalTwoSidedPValue,
  studentTCdf,
  studentTPdf,
  studentTQuantile,
  studentTTwoSidedPValue,
  twoSidedCriticalZ,
} from './distributions.js';

export {
  emptySummary,
  mergeSummaries,
  subtractSummary,
  summarize,
  summaryFromShiftedSums,
  summaryMean,
  summaryVariance,
} from './summary.js';
export type { Summary, VarianceBasis } from './summary.js';

export {
  cohensH,
  fisherExactTest,
  katzRatioInterval,
  newcombeDifferenceInterval,
  twoProportionZTest,
  wilsonInterval,
} from './proportions.js';
export type { FisherExactTestResult, TwoProportionZTestResult } from './proportions.js';

export { incrementalProfit, upliftDifference } from './uplift.js';
export type { ArmCounts, UpliftDifferenceResult } from './uplift.js';

export { hedgesG, studentTTest, tInterval, welchTTest } from './means.js';
export type { MeanInterval, TwoSampleTTestResult } from './means.js';

export {
  coefficientOfVariation,
  mean,
  median,
  modes,
  quantile,
  quartiles,
  skewness,
  standardDeviation,
  variance,
} from './descriptive.js';
export type { BasisOptions } from './descriptive.js';
export type { Quartiles } from './counts.js';

export { describeCounts } from './describe-counts.js';
export type { CountsDescription } from './describe-counts.js';

export { frequencyTable } from './frequency-table.js';
export type { FrequencyRow } from './frequency-table.js';

export { histogram, histogramOfCounts } from './histogram.js';
export type { BinRule, Histogram, HistogramBin, HistogramOptions } from './histogram.js';

export { covariance, pairedMoments, pearsonCorrelation, pearsonCorrelationFromMoments } from './association.js';
export type { CorrelationResult, PairedMoments } from './association.js';

export { adjustPValues } from './multiplicity.js';
export type { AdjustmentMethod } from './multiplicity.js';

export {
  minimumDetectableRateDifference,
  twoProportionPower,
  twoProportionSampleSize,
  twoSampleTPower,
  twoSampleTSampleSize,
  unequalTwoProportionPower,
  unequalTwoProportionSampleSize,
} from './power.js';
export type {
  MinimumDetectableRateDifferenceInput,
  TwoProportionPowerInput,
  TwoProportionSampleSizeInput,
  TwoSampleTPowerInput,
  TwoSampleTSampleSizeInput,
  UnequalTwoProportionSampleSizeInput,
} from './power.js';

export { planHoldoutCampaign } from './campaign-plan.js';
export type { HoldoutCampaignPlan, HoldoutCampaignPlanInput } from './campaign-plan.js';

export { meanEquivalenceTest, rateEquivalenceTest } from './equivalence.js';
export type { EquivalenceTestResult } from './equivalence.js';

export { cochranMantelHaenszelTest, mantelHaenszelRiskDifference } from './stratified.js';
export type { RateStratum, StratifiedRateTestResult } from './stratified.js';

export { empiricalLogit, fitInteractionSpread, fitPriorSpread, logistic, shrinkObservation, shrinkTwoWayTable } from './shrinkage.js';
export type { InteractionSpread, MainEffectSpreads, PriorSpread, ShrinkageObservation, ShrunkEstimate, TwoWayCellObservation } from './shrinkage.js';

export { twoPartTest } from './two-part.js';
export type { TwoPartGroup, TwoPartTestResult } from './two-part.js';
