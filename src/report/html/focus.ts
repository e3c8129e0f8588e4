/**
 * Which summary the headline figures show: the whole study, or, for a
 * trial-count sweep, the largest trial count (pooling counts would mix
 * designs of different strength into one matrix).
 */
import type { Summary } from '../../analysis/index.js';
import type { DataPath, ReportContext } from './context.js';

export interface Focus {
  summary: Summary;
  /** Data path of that summary in the embedded data. */
  path: DataPath;
  /** HTML phrase naming it, e.g. "at 240 trials per observer (the largest count of the sweep)". */
  phrase: string;
}

export function focusOf(ctx: ReportContext): Focus {
  const t = ctx.data.settings.focusTrials;
  const byTrials = ctx.data.summary.byTrials;
  if (t !== null && byTrials?.[String(t)]) {
    return {
      summary: byTrials[String(t)],
      path: ['summary', 'byTrials', String(t)],
      phrase: `at ${ctx.num(['report', 'focusTrials'], 'count')} trials per observer (the largest count of the sweep)`,
    };
  }
  return { summary: ctx.data.summary.overall, path: ['summary', 'overall'], phrase: 'over all datasets' };
}
