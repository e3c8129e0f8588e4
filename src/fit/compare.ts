/**
 * Comparing the fits of every candidate to one dataset: winner under a
 * criterion, differences to the best, and Akaike/Schwarz weights
 * exp(−Δ/2)/Σ exp(−Δ/2) (Burnham & Anderson 2002, Model Selection and
 * Multimodel Inference, §2.9).
 *
 * Models closer than TIE_TOLERANCE are tied whatever the user asks: the
 * optimiser cannot separate them. A user margin can widen that into
 * 'undecided'. If any candidate failed to fit, the dataset's comparison is
 * 'failed': it is never won by the remaining models.
 */
import type { FitResult } from './fitModel.js';

export type Criterion = 'aic' | 'aicc' | 'bic' | 'cv';

/** Measured: repeated fits from different starts agree to ~1e-4 in log-likelihood; 1e-3 leaves margin. */
export const TIE_TOLERANCE_LOGLIK = 1e-3;

export interface Comparison {
  criterion: Criterion;
  status: 'won' | 'tied' | 'undecided' | 'failed';
  /** Best model when status is 'won'. */
  winner: string | null;
  /** Models within the tie tolerance (status 'tied') or the margin ('undecided') of the best, best first. */
  contenders: string[];
  /** Criterion value minus the best value, per model. */
  delta: Record<string, number>;
  weight: Record<string, number>;
  failed: string[];
}

export function criterionValue(fit: FitResult, criterion: Criterion, cvLogLik?: number): number {
  switch (criterion) {
    case 'aic':
      return fit.aic;
    case 'aicc':
      return fit.aicc;
    case 'bic':
      return fit.bic;
    case 'cv':
      return cvLogLik === undefined ? Infinity : -2 * cvLogLik;
  }
}

export function compareFits(fits: FitResult[], criterion: Criterion, margin = 0, cvLogLik?: Record<string, number>): Comparison {
  // A failed fit, or (for cross-validation) a fold that could not be fitted,
  // makes the whole comparison failed: it is never won by the rest.
  const failed = fits
    .filter((f) => f.status !== 'ok' || (criterion === 'cv' && !Number.isFinite(cvLogLik?.[f.model] ?? NaN)))
    .map((f) => f.model);
  const scores = fits.map((f) => criterionValue(f, criterion, cvLogLik?.[f.model]));
  const best = Math.min(...scores);
  const delta: Record<string, number> = {};
  const weight: Record<string, number> = {};
  let z = 0;
  fits.forEach((f, i) => {
    delta[f.model] = scores[i] - best;
    z += Number.isFinite(delta[f.model]) ? Math.exp(-delta[f.model] / 2) : 0;
  });
  fits.forEach((f) => (weight[f.model] = Number.isFinite(delta[f.model]) ? Math.exp(-delta[f.model] / 2) / z : 0));
  const order = fits.map((f) => f.model).sort((a, b) => delta[a] - delta[b] || (a < b ? -1 : a > b ? 1 : 0));
  if (failed.length || !Number.isFinite(best)) return { criterion, status: 'failed', winner: null, contenders: [], delta, weight, failed };
  // Criterion units are −2 log L, so the log-likelihood tolerance doubles.
  const tied = order.filter((m) => delta[m] < 2 * TIE_TOLERANCE_LOGLIK);
  if (tied.length > 1) return { criterion, status: 'tied', winner: null, contenders: tied, delta, weight, failed };
  const close = order.filter((m) => delta[m] < margin);
  if (close.length > 1) return { criterion, status: 'undecided', winner: null, contenders: close, delta, weight, failed };
  return { criterion, status: 'won', winner: order[0], contenders: [order[0]], delta, weight, failed };
}
