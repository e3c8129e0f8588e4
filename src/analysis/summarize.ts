/**
 * The whole analysis of a recovery study: job lines in, one JSON-safe summary
 * out (confusion and inversion matrices, accuracies with intervals,
 * parameter recovery, trade-offs, plain-words verdicts).
 *
 * Reference: R. C. Wilson & A. G. E. Collins (2019), "Ten simple rules for
 * the computational modeling of behavioral data", eLife 8:e49547, rule 6
 * (model recovery as confusion and inversion matrices; parameter recovery as
 * true versus fitted). Each part names its own method reference.
 *
 * Lines are sorted by job key before anything is added up, so the summary is
 * bit-identical whatever order workers, resumes or merged shards wrote them.
 */
import type { JobLine } from './types.js';
import { sortJobLines } from './jobKeys.js';
import { jsonSafe, type JsonSafe } from './jsonSafe.js';
import type { Criterion, OutcomeOptions } from './outcome.js';
import { balancedAccuracy, chanceLevel, confusionMatrix, overallAccuracy, type BalancedAccuracy, type ConfusionMatrix } from './confusion.js';
import { inversionMatrix, type Inversion } from './inversion.js';
import { parameterRecovery, type ModelRecovery } from './parameterRecovery.js';
import { tradeoffs, type Tradeoff } from './tradeoffs.js';
import { verdicts, type Verdict } from './verdict.js';
import type { Proportion } from './wilson.js';

export { compareJobKeys, sortJobLines } from './jobKeys.js';

export interface SummarizeOptions extends OutcomeOptions {
  /** Candidate model ids: the columns, in this order. */
  candidates: readonly string[];
  /** Generating model ids: the rows, in this order. Every line's generating model must be listed. */
  generating: readonly string[];
  /** Quantile bins for loss-parameter recovery (default 4). */
  bins?: number;
}

export interface SummaryData {
  /** The criterion outcomes refer to: the one asked for, or the one all stored comparisons used. */
  criterion: Criterion | null;
  candidates: string[];
  generating: string[];
  /** Lines summarised. */
  jobs: number;
  /** Distinct trial counts among them, ascending. */
  trials: number[];
  confusion: ConfusionMatrix;
  inversion: Inversion;
  accuracy: Proportion;
  balancedAccuracy: BalancedAccuracy;
  chance: number;
  /** Per generating model (row order): failed jobs. */
  failed: number[];
  /** Per generating model (row order): tied or undecided jobs. */
  undecided: number[];
  recovery: ModelRecovery[];
  tradeoffs: Tradeoff[];
  verdicts: Verdict[];
}

/** SummaryData with NaN and ±Infinity as null, ready for summary.json. */
export type Summary = JsonSafe<SummaryData>;

function storedCriterion(lines: readonly JobLine[]): Criterion | null {
  const seen = [...new Set(lines.flatMap((l) => (l.comparison ? [l.comparison.criterion] : [])))].sort();
  if (seen.length > 1) {
    throw new Error(`job lines compare models under different criteria (${seen.join(', ')}); pass a criterion to judge them all by one`);
  }
  return seen[0] ?? null;
}

export function summarize(lines: readonly JobLine[], options: SummarizeOptions): Summary {
  const sorted = sortJobLines(lines);
  const outcome: OutcomeOptions = { criterion: options.criterion, margin: options.margin, tieTolerance: options.tieTolerance };
  const criterion = options.criterion ?? storedCriterion(sorted);
  const confusion = confusionMatrix(sorted, options.candidates, options.generating, outcome);
  const chance = chanceLevel(options.candidates);
  const data: SummaryData = {
    criterion,
    candidates: [...options.candidates],
    generating: [...options.generating],
    jobs: sorted.length,
    trials: [...new Set(sorted.map((l) => l.trials))].sort((a, b) => a - b),
    confusion,
    inversion: inversionMatrix(confusion),
    accuracy: overallAccuracy(confusion),
    balancedAccuracy: balancedAccuracy(confusion),
    chance,
    failed: [...confusion.failed],
    undecided: [...confusion.undecided],
    recovery: parameterRecovery(sorted, options.generating, { bins: options.bins }),
    tradeoffs: tradeoffs(sorted, options.generating),
    verdicts: verdicts(confusion, chance),
  };
  return jsonSafe(data);
}

/**
 * One summary per trial count, keyed by the count as a string (a plain
 * object, so it serialises as it is; integer-like keys enumerate in
 * ascending numeric order).
 */
export function summarizeByTrials(lines: readonly JobLine[], options: SummarizeOptions): Record<string, Summary> {
  const sorted = sortJobLines(lines);
  const byTrials = new Map<number, JobLine[]>();
  for (const l of sorted) {
    const group = byTrials.get(l.trials) ?? [];
    group.push(l);
    byTrials.set(l.trials, group);
  }
  const out: Record<string, Summary> = {};
  for (const t of [...byTrials.keys()].sort((a, b) => a - b)) out[String(t)] = summarize(byTrials.get(t)!, options);
  return out;
}
