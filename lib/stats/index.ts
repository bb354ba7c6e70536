/**
 * Linemix statistics engine: chi-square test of homogeneity for defect mixes
 * across lines and shifts, with exact and Monte Carlo p-values, residuals,
 * effect sizes, pooling of sparse categories, multiple-comparison adjustment
 * and defect-rate comparison. Pure TypeScript, no framework imports.
 */
export { analyzeTable, type TableAnalysis } from "./analyze-table";
export { validateTable, type TableMargins } from "./validate-table";
export {
  checkExpectedCounts,
  expectedCountVerdict,
  type ExpectedCountCheck,
} from "./expected-count-check";
export { adjustedResidual, adjustedResiduals } from "./adjusted-residuals";
export { pearsonResidual, pearsonResiduals } from "./pearson-residuals";
export { cramersV, cramersVCorrected } from "./cramers-v";
export {
  chiSquareUpperTail,
  logChiSquareUpperTail,
  log10ChiSquareUpperTail,
} from "./chi-square-upper-tail";
export { chiSquareCriticalValue } from "./chi-square-critical-value";
export {
  regularizedGammaTails,
  regularizedGammaQ,
  regularizedGammaP,
  logRegularizedGammaQ,
  type GammaTails,
} from "./incomplete-gamma";
export { logGamma, stirlingError } from "./log-gamma";
export { logFactorial, logFactorialTable, LOG_FACTORIAL_TABLE_LIMIT } from "./log-factorial";
export { bd0, logPoissonDensity } from "./poisson-log-density";
export { xLogX, xLogXTable, X_LOG_X_TABLE_LIMIT } from "./x-log-x-table";
export { expNonPositive } from "./exp-non-positive";
export { normalQuantile } from "./normal-quantile";
export { driverCriticalValue } from "./driver-critical-value";
export {
  exactPValue,
  exactIsFeasible,
  fisherExactTest,
  EXACT_DEFAULT_MAX_STEPS,
  type ExactOptions,
  type ExactFeasibility,
  type FisherExactResult,
} from "./fisher-exact";
export {
  createRandomTableSampler,
  type RandomTableSampler,
  type RandomTableSamplerOptions,
} from "./patefield";
export { createXoroshiroStream, WARM_UP, type XoroshiroStream } from "./xoroshiro-stream";
export { monteCarloPValue, type MonteCarloOptions, type MonteCarloResult } from "./monte-carlo";
export { adjustPValues, type PAdjustMethod } from "./p-adjust";
export {
  poolSparseCategories,
  type ExpectedCountRule,
  type PoolOptions,
  type PoolResult,
  type PooledColumn,
  type PoolStep,
} from "./pool-sparse";
export { rateHomogeneity, type RateHomogeneity, type RateGroup } from "./rate-homogeneity";
