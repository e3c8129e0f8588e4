/**
 * The sweep's statistics: the anytime-valid confidence sequence (Robbins'
 * normal mixture), isotonic regression (PAVA), the McNemar monotonicity check
 * and reading the trials needed off the monotone fit.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import jStat from 'jstat';
import { confidenceSequence, mixtureBoundary, tunedRho } from '../src/analysis/confidenceSequence.js';
import { isotonic } from '../src/analysis/isotonic.js';
import { parameterSuccess, sizing, type SizingOptions, type SizingRule } from '../src/analysis/sizing.js';
import { monotonicityCheck } from '../src/analysis/monotonicity.js';
import type { JobLine } from '../src/analysis/types.js';
import { streamFromKey } from '../src/numerics/rng.js';
import { undecided } from '../src/engine/adaptiveSweep.js';

describe('confidence sequence', () => {
  it('its boundary is where the normal-mixture martingale reaches 1/α', () => {
    // Robbins (1970): M = ∫ exp(λs − λ²V/2) N(λ; 0, 1/ρ) dλ, integrated here by brute force on a fine grid.
    const n = 150;
    const rho = 7;
    const alpha = 0.05;
    const s = mixtureBoundary(n, rho, alpha);
    const V = n / 4;
    let M = 0;
    const h = 1e-4;
    for (let l = -3; l <= 3; l += h) M += Math.exp(l * s - (l * l * V) / 2) * Math.sqrt(rho / (2 * Math.PI)) * Math.exp((-rho * l * l) / 2) * h;
    expect(M).toBeCloseTo(1 / alpha, 3);
  });

  it('covers the true proportion at every look in at least 95% of sequences', () => {
    const alpha = 0.05;
    const rho = tunedRho(300, alpha);
    let misses = 0;
    const reps = 1000;
    for (let r = 0; r < reps; r++) {
      const rand = streamFromKey(`cs/${r}`);
      let succ = 0;
      for (let n = 1; n <= 300; n++) {
        if (rand() < 0.3) succ++;
        const ci = confidenceSequence(succ, n, rho, alpha);
        if (0.3 < ci.lower || 0.3 > ci.upper) {
          misses++;
          break;
        }
      }
    }
    // Ville's inequality bounds the chance of ever missing by α; 3 binomial sds of Monte Carlo slack.
    expect(misses / reps).toBeLessThan(alpha + 3 * Math.sqrt((alpha * (1 - alpha)) / reps));
    // And it is not vacuous: it shrinks with n.
    expect(confidenceSequence(240, 300, rho, alpha).upper - confidenceSequence(240, 300, rho, alpha).lower).toBeLessThan(0.25);
  });
});

describe('isotonic regression', () => {
  it('pools adjacent violators (worked by hand from the definition)', () => {
    expect(isotonic([1, 3, 2, 4], [1, 1, 1, 1])).toEqual([1, 2.5, 2.5, 4]);
    // Weighted pooling of 3 (weight 1) with 1 (weight 3): (3·1 + 1·3)/4 = 1.5.
    expect(isotonic([0, 3, 1], [1, 1, 3])).toEqual([0, 1.5, 1.5]);
  });

  it('is non-decreasing, keeps the weighted total and leaves monotone data alone', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.integer({ min: 1, max: 20 })), { minLength: 1, maxLength: 12 }), (pairs) => {
        const v = pairs.map((p) => p[0]);
        const w = pairs.map((p) => p[1]);
        const f = isotonic(v, w);
        for (let i = 1; i < f.length; i++) expect(f[i]).toBeGreaterThanOrEqual(f[i - 1] - 1e-12);
        const tot = (a: number[]) => a.reduce((s, x, i) => s + x * w[i], 0);
        expect(tot(f)).toBeCloseTo(tot(v), 9);
        const sorted = [...v].sort((a, b) => a - b);
        isotonic(sorted, w).forEach((x, i) => expect(x).toBeCloseTo(sorted[i], 12));
      }),
      { seed: 20261202, numRuns: 200 },
    );
  });
});

function line(generating: string, observer: number, trials: number, winner: string): JobLine {
  return {
    key: `gen=${generating}/obs=${String(observer).padStart(4, '0')}/trials=${trials}`,
    generating,
    observer,
    trials,
    truth: {},
    truthFree: {},
    status: 'ok',
    attempts: 1,
    fits: ['a', 'b'].map((m) => ({ model: m, status: 'ok', reason: '', logLikelihood: 0, k: 1, aic: 0, aicc: 0, bic: 0, parameters: [], flatDirection: false, evaluations: 1 })),
    comparison: { criterion: 'bic', status: 'won', winner, contenders: [winner], delta: {}, weight: {} },
  };
}

const rule: SizingRule = { name: 'test', reference: 'test', alpha: 0.05, pointAlpha: 0.05 / 6, rho: tunedRho(40, 0.05 / 6), initialObservers: 40, batch: 0, maxObservers: 40, rounds: 1, decision: 'none' };
const options = (counts: number[]): SizingOptions => ({ candidates: ['a', 'b'], generating: ['a', 'b'], trialCounts: counts, target: 0.8, rule, criterion: 'bic' });

/** Observer o is correct at count index i when o < correctAt[i] (nested: once right, stays right). */
function sweepLines(counts: number[], correctAt: Record<string, number[]>, observers = 40): JobLine[] {
  const lines: JobLine[] = [];
  for (const g of ['a', 'b'])
    counts.forEach((t, i) => {
      for (let o = 0; o < observers; o++) lines.push(line(g, o, t, o < correctAt[g][i] ? g : g === 'a' ? 'b' : 'a'));
    });
  return lines;
}

describe('monotonicity check', () => {
  it('gives the exact one-sided McNemar p-value and flags a real fall', () => {
    const counts = [50, 100];
    // Observers 0–9 right at 50 trials; at 100 only 0 and 1, so 8 got worse and none better.
    const lines = sweepLines(counts, { a: [10, 2], b: [20, 20] });
    const check = monotonicityCheck(lines, options(counts), 0.05);
    // P(Binomial(8, ½) ≥ 8) = 1/256 (binomial tail by hand), below 0.05/2.
    expect(check.falls).toHaveLength(1);
    expect(check.falls[0].p).toBeCloseTo(1 / 256, 12);
    expect(check.falls[0].p).toBeCloseTo(1 - jStat.binomial.cdf(7, 8, 0.5), 12);
  });

  it('does not flag a rising sweep', () => {
    const counts = [50, 100, 200];
    expect(monotonicityCheck(sweepLines(counts, { a: [10, 25, 38], b: [20, 30, 40] }), options(counts), 0.05).falls).toHaveLength(0);
  });
});

describe('trials needed', () => {
  it('reads the crossing off the monotone fit, interpolated in log trials, with envelope bounds', () => {
    const counts = [50, 100, 200, 400];
    const s = sizing(sweepLines(counts, { a: [8, 24, 36, 40], b: [36, 38, 40, 40] }), options(counts));
    const a = s.needed.find((n) => n.generating === 'a')!;
    // a: 0.6 at 100, 0.9 at 200 → crosses 0.8 at exp(log 100 + (0.2/0.3)·log 2) ≈ 159.
    expect(a.trials).toBe(Math.round(Math.exp(Math.log(100) + (2 / 3) * Math.log(2))));
    expect(s.needed.find((n) => n.generating === 'b')!.trials).toBe(50);
    expect(s.neededAll.trials).toBe(a.trials);
    // The interval brackets the point estimate.
    expect(a.lower === null || a.lower < a.trials!).toBe(true);
    expect(a.upper === null || a.upper >= a.trials!).toBe(true);
    const none = sizing(sweepLines(counts, { a: [4, 8, 12, 16], b: [36, 38, 40, 40] }), options(counts));
    expect(none.needed[0].trials).toBeNull();
    expect(none.needed[0].statement).toMatch(/no trial count in the range/);
  });
});

describe('parameter targets', () => {
  it('count an observer when the generating model’s 95% interval excludes the value or is narrow enough', () => {
    const withInterval = (lower: number, upper: number, generating = 'a'): JobLine => {
      const l = line(generating, 0, 100, generating);
      l.fits[generating === 'a' ? 0 : 1].parameters = [{ name: 'loss.exponent', value: (lower + upper) / 2, se: 0.1, lower95: lower, upper95: upper, free: 0, freeSe: 0.1, atBound: false }];
      return l;
    };
    const excl = parameterSuccess({ name: 'loss.exponent', exclude: 2 });
    expect(excl(withInterval(2.1, 2.9))).toBe(true);
    expect(excl(withInterval(1.5, 2.5))).toBe(false);
    expect(excl(withInterval(1.2, 1.99))).toBe(true);
    const narrow = parameterSuccess({ name: 'loss.exponent', width: 0.5 });
    expect(narrow(withInterval(1.5, 1.9))).toBe(true);
    expect(narrow(withInterval(1.5, 2.1))).toBe(false);
    // A line whose generating model lacks the parameter says nothing.
    expect(excl(line('b', 0, 100, 'b'))).toBeNull();
  });
});

describe('adaptive rule', () => {
  it('adds observers only where the interval still contains the target', () => {
    const rho = tunedRho(40, 0.05);
    const right = (l: JobLine) => l.comparison!.winner === l.generating;
    const mk = (correct: number, n: number) => Array.from({ length: n }, (_, o) => line('a', o, 100, o < correct ? 'a' : 'b'));
    // 0 of 30 right: the interval lies far below 0.8, so the point is settled.
    expect(undecided(mk(0, 30), right, 0.8, rho, 0.05)).toBe(false);
    // 24 of 30 right: 0.8 is inside the interval, so more observers are spent.
    expect(undecided(mk(24, 30), right, 0.8, rho, 0.05)).toBe(true);
    // Decided exactly by the confidence sequence's bounds.
    const cs = confidenceSequence(10, 30, rho, 0.05);
    expect(undecided(mk(10, 30), right, 0.8, rho, 0.05)).toBe(cs.lower < 0.8 && cs.upper >= 0.8);
  });
});
