/**
 * How a fit's start ends (src/fit/fitModel.ts).
 * - leavePlateaus: a search that stopped with a coordinate far out on the
 *   logistic transform's plateau, where the gradient vanishes, is continued
 *   from inside when the interior does better, and left alone when the bound
 *   really is best.
 * - A start that reaches an optimum an earlier start converged to stops there
 *   (bfgs's stopAt) and is recorded at that optimum.
 *
 * The objectives are written in θ = σ(z) (the logit transform of a parameter
 * on (0, 1)), so their minima are known exactly.
 */
import { describe, it, expect } from 'vitest';
import { fitModel, leavePlateaus } from '../src/fit/fitModel.js';
import { model, simulate } from './helpers/fitFixtures.js';
import { bfgs, type MinimizeResult } from '../src/numerics/optimize.js';

const sigma = (z: number) => 1 / (1 + Math.exp(-z));
const stoppedAt = (f: (z: readonly number[]) => number, x: number[]): MinimizeResult => ({ x, value: f(x), evaluations: 1, converged: true, reason: 'gradient tolerance reached' });

describe('a parameter stopped on its bound plateau', () => {
  it('is searched again from inside when the interior is better (minimum at θ = 0.3)', () => {
    const f = (z: readonly number[]) => 100 * (sigma(z[0]) - 0.3) ** 2 + (z[1] - 1) ** 2;
    // BFGS itself stops on the plateau: the gradient at z = 30 is ~1e-11.
    const plain = bfgs(f, [30, 1]);
    expect(plain.x[0]).toBeGreaterThan(20);
    const r = leavePlateaus(f, stoppedAt(f, [30, 1]), 400);
    expect(sigma(r.x[0])).toBeCloseTo(0.3, 4);
    expect(r.x[1]).toBeCloseTo(1, 4);
    expect(r.value).toBeLessThan(1e-8);
    expect(r.reason).toMatch(/left a bound plateau/);
  });

  it('two coordinates holding each other on their plateaus are pulled together', () => {
    // f = 2000(a − b)² + (a + b − 1)², minimum 0 at a = b = ½. From both lower plateaus, pulling
    // either coordinate alone to z = −4 (θ ≈ 0.018) costs more through the first term than it gains
    // through the second; pulling both gains.
    const f = (z: readonly number[]) => {
      const a = sigma(z[0]);
      const b = sigma(z[1]);
      return 2000 * (a - b) ** 2 + (a + b - 1) ** 2;
    };
    const plateau = [-25, -25];
    expect(f([-4, -25])).toBeGreaterThan(f(plateau));
    expect(f([-25, -4])).toBeGreaterThan(f(plateau));
    const r = leavePlateaus(f, stoppedAt(f, plateau), 400);
    // f is 1 on the plateau; the fit's search settings stop within ~1e-4 of the minimum.
    expect(r.value).toBeLessThan(1e-3);
    expect(sigma(r.x[0])).toBeCloseTo(0.5, 2);
    expect(sigma(r.x[1])).toBeCloseTo(0.5, 2);
  });

  it('stays at the bound when the bound is best, for the cost of one evaluation per plateau coordinate', () => {
    const f = (z: readonly number[]) => -sigma(z[0]) + (z[1] - 2) ** 2;
    const start = stoppedAt(f, [25, 2]);
    const r = leavePlateaus(f, start, 400);
    expect(r.x).toEqual(start.x);
    expect(r.value).toBe(start.value);
    expect(r.evaluations).toBe(start.evaluations + 1);
  });

  it('leaves interior optima alone (no evaluations)', () => {
    const f = (z: readonly number[]) => (z[0] - 1) ** 2 + (z[1] + 2) ** 2;
    const start = stoppedAt(f, [1, -2]);
    expect(leavePlateaus(f, start, 400)).toEqual(start);
  });
});

describe('a start that reaches an optimum an earlier start found', () => {
  it('stops there, is recorded at that optimum, and says which start it joined', () => {
    const m = model({ loss: { family: 'squared' }, noise: { family: 'constant', sd: 5 } });
    const fit = fitModel(m, simulate(m, 300, 'join/squared'), { starts: 4, skipUncertainty: true });
    const joined = fit.starts.filter((s) => /reached the optimum of start \d/.test(s.reason));
    expect(joined.length).toBeGreaterThan(0);
    for (const s of joined) {
      const k = Number(/start (\d+)/.exec(s.reason)![1]);
      expect(k).toBeLessThan(fit.starts.indexOf(s) + 1);
      expect(s.negLogLik).toBe(fit.starts[k - 1].negLogLik);
      expect(s.converged).toBe(true);
    }
    expect(-fit.logLikelihood).toBe(Math.min(...fit.starts.map((s) => s.negLogLik)));
  });
});

describe('bfgs stopAt', () => {
  it('ends the search at the first accepted point it names, as converged, with its reason', () => {
    const f = (z: readonly number[]) => (z[0] - 3) ** 2 + (z[1] + 1) ** 2;
    const seen: number[] = [];
    const r = bfgs(f, [0, 0], { stopAt: (x, fx) => (seen.push(fx), fx < 1 ? `close at ${x[0].toFixed(2)}` : null) });
    expect(r.converged).toBe(true);
    expect(r.reason).toMatch(/^close at /);
    expect(r.value).toBeLessThan(1);
    expect(seen.filter((v) => v < 1)).toHaveLength(1);
    expect(bfgs(f, [0, 0]).evaluations).toBeGreaterThan(r.evaluations);
  });
});
