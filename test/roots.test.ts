import { describe, it, expect } from 'vitest';
import { safeguardedNewton } from '../src/numerics/roots.js';

describe('safeguardedNewton', () => {
  it('finds known roots to the tolerance, early stop included', () => {
    // x³ = 2: the real cube root of 2 (Math.cbrt as the reference).
    const cube = safeguardedNewton((x) => [x * x * x - 2, 3 * x * x], 1.5, 0, 3, 1e-13, 1);
    expect(Math.abs(cube - Math.cbrt(2))).toBeLessThanOrEqual(1e-13);
    // x = cos x: the Dottie number 0.7390851332151607 (from memory; A&S-style fixed point of cos).
    const dottie = safeguardedNewton((x) => [x - Math.cos(x), 1 + Math.sin(x)], 0.2, -1, 2, 1e-14, 1);
    expect(Math.abs(dottie - 0.7390851332151607)).toBeLessThanOrEqual(1e-14);
  });

  it('stays in the bracket where plain Newton diverges', () => {
    // Newton on atan from |x0| > 1.39 overshoots further each step; the bracket keeps it.
    let calls = 0;
    const r = safeguardedNewton((x) => (calls++, [Math.atan(x), 1 / (1 + x * x)]), 5, -10, 10, 1e-13, 1);
    expect(Math.abs(r)).toBeLessThanOrEqual(1e-13);
    expect(calls).toBeLessThan(40);
  });

  it('stops one evaluation early once quadratic convergence guarantees the tolerance', () => {
    let calls = 0;
    const f = (x: number) => (calls++, [x * x * x - 2, 3 * x * x] as const);
    safeguardedNewton(f, Math.cbrt(2) + 1e-4, 0, 3, 1e-12, 1);
    // From 1e-4 away: step 1 leaves ~1e-8, step 2 (below √(1e-3·tol)) is accepted.
    expect(calls).toBe(2);
  });

  it('a start already at the root within rounding (a Newton step below half an ulp) is returned at once', () => {
    // f(x) = x − 1 computed with a residual of 1e-300 at x = 1: the Newton point rounds to x itself,
    // which the sign test has just made the bracket's upper end. Taking that for a step outside
    // the bracket bisected away from the root and back (the fault the quantile's Newton had).
    let calls = 0;
    const r = safeguardedNewton((x) => (calls++, [x === 1 ? 1e-300 : x - 1, 1]), 1, 0, 10, 1e-12, 1);
    expect(r).toBe(1);
    expect(calls).toBe(1);
  });

  it('returns NaN for a start outside the bracket or a non-finite value', () => {
    expect(safeguardedNewton((x) => [x, 1], 5, -1, 1, 1e-12, 1)).toBeNaN();
    expect(safeguardedNewton(() => [NaN, 1], 0.5, -1, 1, 1e-12, 1)).toBeNaN();
  });
});
