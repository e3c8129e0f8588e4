/**
 * Fabricated job lines for tests of the analysis and of the sweep's rule:
 * every candidate fitted with the same (meaningless) numbers, and a
 * comparison that picked `winner`, which is all the recovery outcome reads.
 */
import type { JobLine } from '../../src/analysis/types.js';

export function fakeLine(generating: string, observer: number, trials: number, winner: string, models: readonly string[] = ['a', 'b']): JobLine {
  return {
    key: `gen=${generating}/obs=${String(observer).padStart(4, '0')}/trials=${trials}`,
    generating,
    observer,
    trials,
    truth: {},
    truthFree: {},
    status: 'ok',
    attempts: 1,
    fits: models.map((m) => ({ model: m, status: 'ok', reason: '', logLikelihood: 0, k: 1, aic: 0, aicc: 0, bic: 0, parameters: [], flatDirection: false, evaluations: 1 })),
    comparison: { criterion: 'bic', status: 'won', winner, contenders: [winner], delta: {}, weight: {} },
  } as JobLine;
}
