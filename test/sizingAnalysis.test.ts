/**
 * The sweep's statistics: the anytime-valid confidence sequence (Robbins'
 * normal mixture), isotonic regression (PAVA), the McNemar monotonicity check
 * and reading the trials needed off the monotone fit.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import jStat from 'jstat';
import { confidenceSequence, logMixtureRatio } from '../src/analysis/confidenceSequence.js';
import { isotonic } from '../src/analysis/isotonic.js';
import { parameterSuccess, sizing, type SizingOptions, type SizingRule } from '../src/analysis/sizing.js';
import { monotonicityCheck } from '../src/analysis/monotonicity.js';
import type { JobLine } from '../src/analysis/types.js';
import { streamFromKey } from '../src/numerics/rng.js';
import { undecided } from '../src/engine/adaptiveSweep.js';
import { fakeLine } from './helpers/fakeLines.js';

describe('confidence sequence', () => {
  it('its ends are where the beta-mixture martingale reaches 1/α', () => {
    // Robbins (1970): M = ∫ q^S (1−q)^(n−S) dq / (p^S (1−p)^(n−S)) for the uniform mixture,
    // integrated here by brute force (midpoint rule in log space), independent of the Beta function.
    const n = 40;
    const S = 31;
    const alpha = 0.05;
    const ci = confidenceSequence(S, n, alpha);
    const M = (p: number) => {
      let acc = 0;
      const m = 200000;
      for (let i = 0; i < m; i++) {
        const q = (i + 0.5) / m;
        acc += Math.exp(S * Math.log(q / p) + (n - S) * Math.log((1 - q) / (1 - p))) / m;
      }
      return acc;
    };
    expect(M(ci.lower)).toBeCloseTo(1 / alpha, 6);
    expect(M(ci.upper)).toBeCloseTo(1 / alpha, 6);
    expect(ci.lower).toBeLessThan(S / n);
    expect(ci.upper).toBeGreaterThan(S / n);
    expect(logMixtureRatio(S, n, S / n)).toBeLessThan(0);
  });

  it('covers the true proportion at every look in at least 95% of sequences', () => {
    const alpha = 0.05;
    let misses = 0;
    const reps = 1000;
    for (let r = 0; r < reps; r++) {
      const rand = streamFromKey(`cs/${r}`);
      let succ = 0;
      for (let n = 1; n <= 300; n++) {
        if (rand() < 0.3) succ++;
        // p lies outside the sequence's interval exactly when M_n(p) ≥ 1/α (the definition).
        if (logMixtureRatio(succ, n, 0.3) >= Math.log(1 / alpha)) {
          misses++;
          break;
        }
      }
    }
    // Ville's inequality bounds the chance of ever missing by α; 3 binomial sds of Monte Carlo slack.
    expect(misses / reps).toBeLessThan(alpha + 3 * Math.sqrt((alpha * (1 - alpha)) / reps));
    // The bisected interval agrees with the definition.
    for (const [k, n] of [[3, 10], [20, 40], [90, 300]]) {
      const ci = confidenceSequence(k, n, alpha);
      expect(logMixtureRatio(k, n, ci.lower)).toBeCloseTo(Math.log(1 / alpha), 6);
      expect(logMixtureRatio(k, n, ci.upper)).toBeCloseTo(Math.log(1 / alpha), 6);
    }
    // And it is not vacuous: it shrinks with n.
    expect(confidenceSequence(240, 300, alpha).upper - confidenceSequence(240, 300, alpha).lower).toBeLessThan(0.2);
    // All successes: the interval reaches 1 and its lower end solves M = 1/((n+1)·p^n) = 1/α.
    expect(confidenceSequence(40, 40, alpha).upper).toBe(1);
    expect(confidenceSequence(40, 40, alpha).lower).toBeCloseTo(Math.pow(alpha / 41, 1 / 40), 9);
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

const line = (generating: string, observer: number, trials: number, winner: string): JobLine => fakeLine(generating, observer, trials, winner);

const rule: SizingRule = { name: 'test', reference: 'test', alpha: 0.05, pointAlpha: 0.05 / 6, mixture: 'uniform Beta(1, 1)', initialObservers: 40, batch: 0, maxObservers: 40, rounds: 1, decision: 'none' };
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
    const right = (l: JobLine) => l.comparison!.winner === l.generating;
    const mk = (correct: number, n: number) => Array.from({ length: n }, (_, o) => line('a', o, 100, o < correct ? 'a' : 'b'));
    // 0 of 30 right: the interval lies far below 0.8, so the point is settled.
    expect(undecided(mk(0, 30), right, 0.8, 0.05)).toBe(false);
    // 24 of 30 right: 0.8 is inside the interval, so more observers are spent.
    expect(undecided(mk(24, 30), right, 0.8, 0.05)).toBe(true);
    // Decided exactly by the confidence sequence's bounds.
    const cs = confidenceSequence(10, 30, 0.05);
    expect(undecided(mk(10, 30), right, 0.8, 0.05)).toBe(cs.lower < 0.8 && cs.upper >= 0.8);
  });
});
