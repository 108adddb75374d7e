/** State minimization: implication chart, compatibles, minimum closed cover and reduced table. */
export { buildImplicationChart, pairIndex, type ChartEntry, type ImplicationChart, type ImpliedPair, type PairReason } from './implication-chart';
export {
  findClassSet,
  findMaximalCompatibles,
  findPrimeCompatibles,
  type CompatibleSets,
  type EnumerationLimits,
  type PrimeCompatible,
  type PrimeCompatibles,
} from './compatibles';
export { findGreedyCover, findMinimumCover, type CoverCandidate, type CoverOptions, type CoverResult } from './cover';
export {
  buildReducedTable,
  countIncompatibleStates,
  minimizeTable,
  nameClasses,
  verifyReduction,
  type CoverMethod,
  type MinimizeOptions,
  type MinimizeResult,
  type MinimizeStats,
  type ReductionProblem,
} from './reduce';
