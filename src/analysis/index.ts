/**
 * The analysis API in one import: pure functions from job lines to
 * summaries. Method references are in each module's header (Wilson 1927;
 * Newcombe 1998; Zou & Donner 2008; Wilson & Collins 2019, eLife).
 */
export type { JobLine, FitLine, ParameterLine, ComparisonLine } from './types.js';
export { jsonSafe, isFiniteNumber, type JsonSafe } from './jsonSafe.js';
export { wilsonInterval, proportion, Z95, type Interval, type Proportion } from './wilson.js';
export { moverLinear, moverMean, type MoverTerm } from './mover.js';
export { compareJobKeys, sortJobLines } from './jobKeys.js';
export { jobOutcome, DEFAULT_TIE_TOLERANCE, type Outcome, type OutcomeOptions, type Criterion } from './outcome.js';
export {
  confusionMatrix,
  overallAccuracy,
  balancedAccuracy,
  chanceLevel,
  type ConfusionMatrix,
  type TieGroup,
  type BalancedAccuracy,
} from './confusion.js';
export { inversionMatrix, invertRates, type Inversion } from './inversion.js';
export { pearson, spearman, averageRanks } from './correlation.js';
export {
  parameterRecovery,
  recoveryStats,
  quantileBins,
  DEFAULT_RECOVERY_BINS,
  type RecoveryPoint,
  type RecoveryStats,
  type RecoveryBin,
  type ParameterRecovery,
  type ModelRecovery,
  type RecoveryOptions,
} from './parameterRecovery.js';
export { tradeoffs, type Tradeoff } from './tradeoffs.js';
export { verdictFor, verdicts, percent, NOT_IDENTIFIABLE_SHARE, type Verdict, type VerdictKind } from './verdict.js';
export { summarize, summarizeByTrials, type SummarizeOptions, type SummaryData, type Summary } from './summarize.js';
export {
  randomEffectsSelection,
  exceedanceProbabilities,
  type RandomEffectsOptions,
  type RandomEffectsSelection,
} from './randomEffects.js';
