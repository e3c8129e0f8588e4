/**
 * What one job says about model recovery: a winner, a tie (or an undecided
 * comparison within the user's margin), or a failure.
 *
 * Reference: differences in an information criterion to the best model,
 * Δᵢ = ICᵢ − min IC, as in K. P. Burnham & D. R. Anderson (2002), Model
 * Selection and Multimodel Inference (2nd ed.), §2.6; the tie and margin
 * rules repeat those the fit stage applies (src/fit/compare.ts), written out
 * here because analysis imports nothing but types.
 *
 * The stored comparison is the source of truth and is used whenever it
 * answers the question asked. The job is decided again from the stored fits
 * only when the caller asks for a different criterion, or for a different
 * set of candidates (e.g. "what if only squared and absolute were compared").
 */
import type { ComparisonLine, FitLine, JobLine } from './types.js';
import { isFiniteNumber } from './jsonSafe.js';

export type Criterion = ComparisonLine['criterion'];

export type Outcome = (
  | { kind: 'won'; winner: string }
  /** Contenders in candidate order, whatever order the line listed them in. */
  | { kind: 'tied' | 'undecided'; contenders: string[] }
  | { kind: 'failed' }
) & {
  /** True when the job was decided here from its fits rather than read from its comparison. */
  redecided: boolean;
};

export interface OutcomeOptions {
  /** Criterion to judge by; default: the one each line's comparison used. */
  criterion?: Criterion;
  /** Δ below which a second model makes the comparison 'undecided' when deciding afresh (criterion units). Default 0. */
  margin?: number;
  /**
   * Δ below which models are tied when deciding afresh (criterion units).
   * Default 2e-3: the fit stage's 1e-3 in log-likelihood, doubled because
   * criteria are on the −2 log L scale.
   */
  tieTolerance?: number;
}

export const DEFAULT_TIE_TOLERANCE = 2e-3;

function criterionValue(fit: FitLine, criterion: Criterion): number {
  const v = criterion === 'cv' ? (isFiniteNumber(fit.cvLogLikelihood) ? -2 * fit.cvLogLikelihood : null) : fit[criterion];
  return isFiniteNumber(v) ? v : Infinity;
}

function sameModels(fits: readonly FitLine[], candidates: readonly string[]): boolean {
  if (fits.length !== candidates.length) return false;
  const fitted = new Set(fits.map((f) => f.model));
  return fitted.size === candidates.length && candidates.every((c) => fitted.has(c));
}

function inCandidateOrder(models: readonly string[], candidates: readonly string[], key: string): string[] {
  const index = new Map(candidates.map((c, i) => [c, i] as const));
  for (const m of models) {
    if (!index.has(m)) throw new Error(`job ${key}: contender '${m}' is not among the candidates`);
  }
  return [...new Set(models)].sort((a, b) => index.get(a)! - index.get(b)!);
}

function decide(line: JobLine, candidates: readonly string[], criterion: Criterion, margin: number, tol: number): Outcome {
  const failed: Outcome = { kind: 'failed', redecided: true };
  const scores: number[] = [];
  for (const c of candidates) {
    const fit = line.fits.find((f) => f.model === c);
    // As in the fit stage: one failed candidate fails the comparison, so the rest never "win" by default.
    if (!fit || fit.status !== 'ok') return failed;
    scores.push(criterionValue(fit, criterion));
  }
  const best = Math.min(...scores);
  if (!Number.isFinite(best)) return failed;
  const delta = scores.map((s) => s - best);
  const tied = candidates.filter((_, i) => delta[i] < tol);
  if (tied.length > 1) return { kind: 'tied', contenders: tied, redecided: true };
  const close = candidates.filter((_, i) => delta[i] < margin);
  if (close.length > 1) return { kind: 'undecided', contenders: close, redecided: true };
  return { kind: 'won', winner: candidates[delta.indexOf(0)], redecided: true };
}

/** Classify one job against the given candidates. Throws on lines that contradict the candidate list. */
export function jobOutcome(line: JobLine, candidates: readonly string[], options: OutcomeOptions = {}): Outcome {
  const margin = options.margin ?? 0;
  const tol = options.tieTolerance ?? DEFAULT_TIE_TOLERANCE;
  if (!(Number.isFinite(margin) && margin >= 0)) throw new RangeError(`margin must be a finite number ≥ 0, got ${margin}`);
  // A zero tolerance would let two exactly equal scores pass as a win for whichever is listed first.
  if (!(Number.isFinite(tol) && tol > 0)) throw new RangeError(`tieTolerance must be a finite number > 0, got ${tol}`);
  if (line.status === 'failed') return { kind: 'failed', redecided: false };
  const stored = line.comparison;
  const criterion = options.criterion ?? stored?.criterion;
  if (stored && stored.criterion === criterion && sameModels(line.fits, candidates)) {
    switch (stored.status) {
      case 'failed':
        return { kind: 'failed', redecided: false };
      case 'won':
        if (stored.winner === null || !candidates.includes(stored.winner)) {
          throw new Error(`job ${line.key}: winner '${stored.winner}' is not among the candidates`);
        }
        return { kind: 'won', winner: stored.winner, redecided: false };
      case 'tied':
      case 'undecided':
        return { kind: stored.status, contenders: inCandidateOrder(stored.contenders, candidates, line.key), redecided: false };
    }
  }
  // No comparison and no criterion to make one with: nothing can be credited to any model.
  if (criterion === undefined) return { kind: 'failed', redecided: false };
  return decide(line, candidates, criterion, margin, tol);
}
