/**
 * What counts as a success for one dataset in a sweep: the generating model
 * chosen (model recovery), or the generating model's fitted 95% interval of a
 * parameter excluding a value or being narrow enough (parameter targets).
 */
import type { JobLine } from './types.js';
import { jobOutcome, type OutcomeOptions } from './outcome.js';

export interface ParameterTarget {
  name: string;
  exclude?: number;
  width?: number;
}

export type Success = (line: JobLine) => boolean | null;

export function modelSuccess(candidates: readonly string[], options: OutcomeOptions): Success {
  return (l) => {
    const o = jobOutcome(l, candidates, options);
    return o.kind === 'won' && o.winner === l.generating;
  };
}

/** null: this line says nothing about the parameter (another model, or its fit lacks it). */
export function parameterSuccess(p: ParameterTarget): Success {
  return (l) => {
    const fit = l.fits.find((f) => f.model === l.generating && f.status === 'ok');
    const est = fit?.parameters.find((q) => q.name === p.name);
    if (!est) return l.status === 'failed' ? false : null;
    if (!Number.isFinite(est.lower95) || !Number.isFinite(est.upper95)) return false;
    if (p.exclude !== undefined) return p.exclude < est.lower95 || p.exclude > est.upper95;
    return est.upper95 - est.lower95 <= (p.width ?? Infinity);
  };
}
