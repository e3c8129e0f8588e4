/**
 * The trial-count sweep's analysis: job lines in, the `sizing` object of
 * summary.json out.
 *
 * Per (generating model, trial count) point: the share of datasets whose
 * generating model was chosen, with a 95% anytime-valid interval
 * (confidenceSequence.ts; valid although observers were added adaptively) and,
 * for reference only, the fixed-sample Wilson interval. Accuracy against log
 * trial count is fitted by weighted isotonic regression (isotonic.ts): nested
 * prefixes make accuracy non-decreasing in expectation, and isotonic
 * regression assumes nothing else (a logistic curve would impose a symmetric
 * S-shape and a ceiling of 1, which lapses and undecidable pairs break). The
 * smallest count reaching the target is read off that fit, interpolating
 * linearly in log trials between grid counts. Its interval comes from
 * monotone envelopes of the simultaneous intervals (Bonferroni over all
 * points): if the true curve is non-decreasing, it lies below
 * min_{t' ≥ t} upper(t') and above max_{t' ≤ t} lower(t'), so the crossing
 * lies between where those envelopes cross the target.
 * The monotonicity check is in monotonicity.ts.
 */
import type { JobLine } from './types.js';
import type { OutcomeOptions } from './outcome.js';
import { modelSuccess, parameterSuccess, type ParameterTarget, type Success } from './sizingSuccess.js';

export type { ParameterTarget } from './sizingSuccess.js';
export { modelSuccess, parameterSuccess } from './sizingSuccess.js';
import { wilsonInterval } from './wilson.js';
import { confidenceSequence } from './confidenceSequence.js';
import { isotonic } from './isotonic.js';
import { monotonicityCheck, type MonotonicityCheck } from './monotonicity.js';

export const SIZING_VERSION = 1;

export interface SizingRule {
  name: string;
  reference: string;
  alpha: number;
  /** Per-point level of the simultaneous intervals behind the crossing's interval (α / points); the adaptive decisions use alpha. */
  pointAlpha: number;
  /** Mixing distribution of the confidence sequence. */
  mixture: string;
  initialObservers: number;
  batch: number;
  maxObservers: number;
  rounds: number;
  decision: string;
}


export interface SizingPoint {
  generating: string;
  trials: number;
  observers: number;
  successes: number;
  failed: number;
  rate: number | null;
  /** 95% anytime-valid interval. */
  lower: number;
  upper: number;
  /** Interval at the simultaneous level (pointAlpha), used for the crossing. */
  simultaneousLower: number;
  simultaneousUpper: number;
  /** Fixed-sample Wilson interval: not valid after adaptive stopping; for comparison only. */
  wilsonLower: number | null;
  wilsonUpper: number | null;
  /** Isotonic fit of the rate against log trials. */
  fitted: number | null;
}

export interface TrialsNeeded {
  generating: string;
  /** Smallest trial count reaching the target on the monotone fit (interpolated in log trials); null when none in range. */
  trials: number | null;
  /** The crossing lies above `lower` (null: possibly at or below the smallest count) and at or below `upper` (null: possibly beyond the largest count). */
  lower: number | null;
  upper: number | null;
  statement: string;
}


export interface SizingTargetResult {
  points: SizingPoint[];
  overall: { trials: number; rate: number | null; lower: number; upper: number }[];
  needed: TrialsNeeded[];
  neededAll: TrialsNeeded;
}

export interface Sizing extends SizingTargetResult {
  version: number;
  target: number;
  criterion: string | null;
  trialCounts: number[];
  rule: SizingRule;
  monotoneFit: { method: string; why: string };
  monotonicity: MonotonicityCheck;
  parameter?: ParameterTarget & SizingTargetResult & { success: string };
  /** The analytic preview's prediction at the same counts, to set against the simulation. */
  predicted?: { method: string; points: { generating: string; trials: number; p: number }[]; trialsNeeded: Record<string, number | null> };
  caution: string;
  /**
   * Present only in the folder of a sweep run in rounds on a cluster whose later rounds are still to run:
   * says that the numbers describe the rounds so far. Absent from a finished sweep, merged or single-machine.
   */
  provisional?: string;
}

export interface SizingOptions extends OutcomeOptions {
  candidates: readonly string[];
  generating: readonly string[];
  trialCounts: readonly number[];
  target: number;
  rule: SizingRule;
  parameter?: ParameterTarget;
}

function interpolateLog(t0: number, t1: number, y0: number, y1: number, target: number): number {
  if (y1 === y0) return t1;
  const f = (target - y0) / (y1 - y0);
  return Math.exp(Math.log(t0) + f * (Math.log(t1) - Math.log(t0)));
}

function needed(generating: string, counts: readonly number[], fitted: (number | null)[], lo: number[], hi: number[], target: number): TrialsNeeded {
  // Monotone envelopes of the simultaneous bounds.
  const upperEnv = hi.map((_, i) => Math.min(...hi.slice(i)));
  const lowerEnv = lo.map((_, i) => Math.max(...lo.slice(0, i + 1)));
  let trials: number | null = null;
  for (let i = 0; i < counts.length; i++) {
    const y = fitted[i];
    if (y === null || y < target) continue;
    trials = i === 0 ? counts[0] : interpolateLog(counts[i - 1], counts[i], fitted[i - 1] ?? 0, y, target);
    break;
  }
  const firstUp = upperEnv.findIndex((u) => u >= target);
  const lower = firstUp === -1 ? counts[counts.length - 1] : firstUp === 0 ? null : counts[firstUp - 1];
  const firstLow = lowerEnv.findIndex((l) => l >= target);
  const upper = firstLow === -1 ? null : counts[firstLow];
  const pct = `${Math.round(100 * target)}%`;
  let statement: string;
  if (trials === null)
    statement = `${generating}: no trial count in the range (${counts[0]}–${counts[counts.length - 1]}) reaches ${pct} on the monotone fit${firstUp === -1 ? '; even the upper interval bounds stay below it' : ''}.`;
  else
    statement = `${generating}: about ${Math.round(trials)} trials reach ${pct} (monotone fit); interval: ${lower === null ? `at or below ${counts[0]}` : `above ${lower}`} and ${upper === null ? `possibly beyond ${counts[counts.length - 1]}` : `at most ${upper}`}.`;
  return { generating, trials: trials === null ? null : Math.round(trials), lower, upper, statement };
}

function targetResult(lines: readonly JobLine[], o: SizingOptions, success: Success, generating: readonly string[]): SizingTargetResult {
  const counts = [...o.trialCounts].sort((a, b) => a - b);
  const points: SizingPoint[] = [];
  const needs: TrialsNeeded[] = [];
  const fittedBy: Record<string, (number | null)[]> = {};
  const simLo: Record<string, number[]> = {};
  const simHi: Record<string, number[]> = {};
  for (const g of generating) {
    const pts = counts.map((t) => {
      let n = 0;
      let s = 0;
      let failed = 0;
      for (const l of lines) {
        if (l.generating !== g || l.trials !== t) continue;
        const ok = success(l);
        if (ok === null) continue;
        n++;
        if (ok) s++;
        if (l.status === 'failed' || l.comparison?.status === 'failed') failed++;
      }
      const cs = confidenceSequence(s, n, o.rule.alpha);
      const sim = confidenceSequence(s, n, o.rule.pointAlpha);
      const w = n > 0 ? wilsonInterval(s, n) : null;
      return { generating: g, trials: t, observers: n, successes: s, failed, rate: n > 0 ? s / n : null, lower: cs.lower, upper: cs.upper, simultaneousLower: sim.lower, simultaneousUpper: sim.upper, wilsonLower: w?.lower ?? null, wilsonUpper: w?.upper ?? null, fitted: null as number | null };
    });
    const withData = pts.filter((p) => p.observers > 0);
    const fit = isotonic(withData.map((p) => p.rate!), withData.map((p) => p.observers));
    withData.forEach((p, i) => (p.fitted = fit[i]));
    points.push(...pts);
    fittedBy[g] = pts.map((p) => p.fitted);
    simLo[g] = pts.map((p) => p.simultaneousLower);
    simHi[g] = pts.map((p) => p.simultaneousUpper);
    needs.push(needed(g, counts, fittedBy[g], simLo[g], simHi[g], o.target));
  }
  const overall = counts.map((t, i) => {
    const pts = points.filter((p) => p.trials === t && p.rate !== null);
    const mean = (f: (p: SizingPoint) => number) => (pts.length ? pts.reduce((a, p) => a + f(p), 0) / pts.length : NaN);
    // Balanced over generating models; the bounds average the simultaneous bounds, so they hold whenever all of them do.
    return { trials: t, rate: pts.length ? mean((p) => p.rate!) : null, lower: mean((p) => p.simultaneousLower), upper: mean((p) => p.simultaneousUpper), i };
  });
  // Every model must reach the target: the weakest model's fit and envelopes decide.
  const worst = (arr: Record<string, (number | null)[]>, i: number) => Math.min(...generating.map((g) => arr[g][i] ?? -Infinity));
  const all = needed(
    'every generating model',
    counts,
    counts.map((_, i) => (generating.length ? worst(fittedBy, i) : null)),
    counts.map((_, i) => worst(simLo, i)),
    counts.map((_, i) => worst(simHi, i)),
    o.target,
  );
  return { points, overall: overall.map(({ i: _i, ...rest }) => rest), needed: needs, neededAll: all };
}

export const SIZING_CAUTION =
  'Trial counts from a simulation hold only under its assumptions (these models, these parameter draws, this design). They complement, and do not replace, a pilot study and the advice of your local ethics board and statistician.';

export function sizing(lines: readonly JobLine[], o: SizingOptions): Sizing {
  const model = targetResult(lines, o, modelSuccess(o.candidates, o), o.generating);
  let parameter: Sizing['parameter'];
  if (o.parameter) {
    const p = o.parameter;
    const has = o.generating.filter((g) => lines.some((l) => l.generating === g && l.fits.some((f) => f.model === g && f.parameters.some((q) => q.name === p.name))));
    parameter = {
      ...p,
      success: p.exclude !== undefined ? `the 95% interval of ${p.name} excludes ${p.exclude}` : `the 95% interval of ${p.name} is at most ${p.width} wide`,
      ...targetResult(lines, o, parameterSuccess(p), has),
    };
  }
  return {
    version: SIZING_VERSION,
    target: o.target,
    criterion: o.criterion ?? null,
    trialCounts: [...o.trialCounts].sort((a, b) => a - b),
    rule: o.rule,
    monotoneFit: {
      method: 'weighted isotonic regression (pool-adjacent-violators) of accuracy on log trial count, weights = observers per point; crossing interpolated linearly in log trials',
      why: 'nested prefixes make accuracy non-decreasing in expectation and nothing more is known; a logistic curve would impose a symmetric S-shape with a ceiling of 1, which lapses and indistinguishable models break',
    },
    monotonicity: monotonicityCheck(lines, o, o.rule.alpha),
    ...model,
    ...(parameter ? { parameter } : {}),
    caution: SIZING_CAUTION,
  };
}
