/**
 * Checks of the statistics behind the analysis: the Wilson score interval
 * against Newcombe (1998, Statistics in Medicine 17:857–872) and its closed
 * forms at 0 and n; MOVER for combinations of proportions against Newcombe
 * (1998, Statistics in Medicine 17:873–890, method 10); Pearson and Spearman
 * correlations against hand computations and Anscombe's quartet (Anscombe
 * 1973, The American Statistician 27:17–21); parameter recovery (bias, RMSE,
 * coverage as in Morris, White & Crowther 2019), quantile bins and
 * trade-offs against hand-worked jobs.
 */
import { describe, it, expect } from 'vitest';
import type { FitLine, JobLine, ParameterLine } from '../src/analysis/types.js';
import { wilsonInterval, proportion, Z95 } from '../src/analysis/wilson.js';
import { moverLinear, moverMean } from '../src/analysis/mover.js';
import { pearson, spearman, averageRanks } from '../src/analysis/correlation.js';
import { parameterRecovery, quantileBins, recoveryStats } from '../src/analysis/parameterRecovery.js';
import { tradeoffs } from '../src/analysis/tradeoffs.js';

describe('Wilson score interval', () => {
  // Newcombe (1998a), Table I, method 3 (score, no continuity correction); values from memory, four decimals.
  it.each([
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ])('%i/%i → [%f, %f] (Newcombe 1998)', (x, n, lo, hi) => {
    const w = wilsonInterval(x, n);
    expect(w.estimate).toBe(x / n);
    expect(w.lower).toBeCloseTo(lo, 4);
    expect(w.upper).toBeCloseTo(hi, 4);
  });

  it('has closed forms at 0 and n', () => {
    // At p̂ = 0 the Wilson quadratic gives [0, z²/(n + z²)]; at p̂ = 1, [n/(n + z²), 1].
    // n = 10: z² = 3.84146, so 3.84146/13.84146 = 0.27753 and 10/13.84146 = 0.72247.
    const z2 = Z95 * Z95;
    expect(wilsonInterval(0, 10)).toEqual({ estimate: 0, lower: 0, upper: expect.closeTo(z2 / (10 + z2), 14) });
    expect(wilsonInterval(10, 10)).toEqual({ estimate: 1, lower: expect.closeTo(10 / (10 + z2), 14), upper: 1 });
    expect(wilsonInterval(0, 10).upper).toBeCloseTo(0.2775, 4);
    expect(wilsonInterval(10, 10).lower).toBeCloseTo(0.7225, 4);
  });

  it('is symmetric under swapping successes and failures', () => {
    for (const [x, n] of [[3, 17], [0, 5], [40, 41]]) {
      const a = wilsonInterval(x, n);
      const b = wilsonInterval(n - x, n);
      expect(a.lower).toBeCloseTo(1 - b.upper, 14);
      expect(a.upper).toBeCloseTo(1 - b.lower, 14);
    }
  });

  it('takes another z', () => {
    // z = 1, 1 of 2: centre (0.5 + 1/4)/(1 + 1/2) = 0.5, half (1/1.5)·√(0.125 + 0.0625) = 0.288675 → [0.211325, 0.788675].
    const w = wilsonInterval(1, 2, 1);
    expect(w.lower).toBeCloseTo(0.5 - Math.sqrt(0.1875) / 1.5, 14);
    expect(w.upper).toBeCloseTo(0.5 + Math.sqrt(0.1875) / 1.5, 14);
  });

  it('returns NaN for n = 0 and refuses impossible counts', () => {
    expect(wilsonInterval(0, 0)).toEqual({ estimate: NaN, lower: NaN, upper: NaN });
    expect(proportion(0, 0)).toMatchObject({ successes: 0, n: 0 });
    expect(() => wilsonInterval(3, 2)).toThrow(RangeError);
    expect(() => wilsonInterval(-1, 2)).toThrow(RangeError);
    expect(() => wilsonInterval(1, NaN)).toThrow(RangeError);
    expect(() => wilsonInterval(1, 2, 0)).toThrow(RangeError);
  });
});

describe('MOVER interval for combinations of proportions', () => {
  // Newcombe (1998b), Table II, method 10 (difference of Wilson intervals); values from memory, four decimals.
  it.each([
    [56, 70, 48, 80, 0.0524, 0.3339],
    [9, 10, 3, 10, 0.1705, 0.809],
    [5, 56, 0, 29, -0.0381, 0.1926],
    [10, 10, 0, 10, 0.6075, 1],
  ])('%i/%i − %i/%i → [%f, %f] (Newcombe 1998)', (a, m, b, n, lo, hi) => {
    const d = moverLinear([
      { ...wilsonInterval(a, m), weight: 1 },
      { ...wilsonInterval(b, n), weight: -1 },
    ]);
    expect(d.estimate).toBeCloseTo(a / m - b / n, 14);
    expect(d.lower).toBeCloseTo(lo, 4);
    expect(d.upper).toBeCloseTo(hi, 4);
  });

  it('reduces to the term itself for one term, and stays inside [0, 1] for a mean', () => {
    const w = wilsonInterval(7, 9);
    expect(moverMean([w])).toEqual({ estimate: w.estimate, lower: expect.closeTo(w.lower, 15), upper: expect.closeTo(w.upper, 15) });
    const all = moverMean([wilsonInterval(5, 5), wilsonInterval(8, 8)]);
    expect(all.estimate).toBe(1);
    expect(all.upper).toBe(1);
    expect(all.lower).toBeGreaterThan(0.5);
    expect(all.lower).toBeLessThan(1);
  });

  it('gives NaN for nothing or for undefined terms', () => {
    expect(moverMean([])).toEqual({ estimate: NaN, lower: NaN, upper: NaN });
    expect(moverMean([wilsonInterval(1, 2), wilsonInterval(0, 0)]).estimate).toBeNaN();
  });
});

describe('correlation', () => {
  it('Pearson r by hand', () => {
    // x = 1, 2, 3 (mean 2), y = 2, 4, 7 (mean 13/3): Σdxdy = 7/3 + 8/3 = 5, Σdx² = 2,
    // Σdy² = (49 + 1 + 64)/9 = 114/9, so r = 5/√(228/9) = 15/√228.
    expect(pearson([1, 2, 3], [2, 4, 7])).toBeCloseTo(15 / Math.sqrt(228), 14);
    expect(pearson([1, 2, 3], [6, 4, 2])).toBe(-1);
    expect(pearson([1, 2, 3], [2, 4, 6])).toBe(1);
  });

  it('Pearson r is 0.816 for each of Anscombe’s four data sets (Anscombe 1973; from memory)', () => {
    const x = [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5];
    const y1 = [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68];
    const y2 = [9.14, 8.14, 8.74, 8.77, 9.26, 8.1, 6.13, 3.1, 9.13, 7.26, 4.74];
    const y3 = [7.46, 6.77, 12.74, 7.11, 7.81, 8.84, 6.08, 5.39, 8.15, 6.42, 5.73];
    const x4 = [8, 8, 8, 8, 8, 8, 8, 19, 8, 8, 8];
    const y4 = [6.58, 5.76, 7.71, 8.84, 8.47, 7.04, 5.25, 12.5, 5.56, 7.91, 6.89];
    for (const [a, b] of [[x, y1], [x, y2], [x, y3], [x4, y4]]) expect(Math.abs(pearson(a, b) - 0.816)).toBeLessThan(0.0006);
  });

  it('average ranks for ties', () => {
    // 10 ×3 take ranks 1–3 → 2; 20 ×2 take 4–5 → 4.5; 30 → 6.
    expect(averageRanks([10, 20, 10, 30, 20, 10])).toEqual([2, 4.5, 2, 6, 4.5, 2]);
    expect(averageRanks([3, 1, 2])).toEqual([3, 1, 2]);
    expect(averageRanks([1, NaN]).every(Number.isNaN)).toBe(true);
  });

  it('Spearman ρ by hand, with ties', () => {
    // y = 5, 6, 7, 8, 7 has ranks 1, 2, 3.5, 5, 3.5 (mean 3); x ranks 1..5 (mean 3).
    // Σdxdy = 4 + 1 + 0 + 2 + 1 = 8, Σdx² = 10, Σdy² = 4 + 1 + 0.25 + 4 + 0.25 = 9.5 → ρ = 8/√95.
    expect(spearman([1, 2, 3, 4, 5], [5, 6, 7, 8, 7])).toBeCloseTo(8 / Math.sqrt(95), 14);
    // Monotone but not linear: ρ = ±1 while r < 1.
    const x = [1, 2, 3, 4, 5, 6];
    const cube = x.map((v) => v ** 3);
    expect(spearman(x, cube)).toBe(1);
    expect(spearman(x, cube.map((v) => -v))).toBe(-1);
    expect(pearson(x, cube)).toBeLessThan(1);
    // Without ties ρ = 1 − 6Σd²/(n(n²−1)): ranks 1..4 against 2, 1, 4, 3 give Σd² = 4, ρ = 1 − 24/60 = 0.6.
    expect(spearman([1, 2, 3, 4], [2, 1, 4, 3])).toBeCloseTo(0.6, 14);
  });

  it('is undefined (NaN) for constant samples and fewer than two pairs, and refuses unpaired input', () => {
    expect(pearson([0.1, 0.1, 0.1], [1, 2, 3])).toBeNaN();
    expect(spearman([1, 2, 3], [4, 4, 4])).toBeNaN();
    expect(pearson([1], [2])).toBeNaN();
    expect(pearson([], [])).toBeNaN();
    expect(pearson([1, NaN, 3], [1, 2, 3])).toBeNaN();
    expect(() => pearson([1, 2], [1])).toThrow(RangeError);
  });
});

describe('quantile bins', () => {
  const id = (v: number): number => v;
  it('splits by rank into near-equal groups', () => {
    expect(quantileBins([4, 1, 3, 2], id, 2)).toEqual([[1, 2], [3, 4]]);
    // n = 5, 4 bins: boundaries ⌊5b/4⌋ = 1, 2, 3, 5.
    expect(quantileBins([5, 4, 3, 2, 1], id, 4)).toEqual([[1], [2], [3], [4, 5]]);
  });

  it('keeps equal values in one group', () => {
    // The boundary after position 2 falls inside the run of 1s and moves past it.
    expect(quantileBins([1, 2, 1, 1], id, 2)).toEqual([[1, 1, 1], [2]]);
    expect(quantileBins([7, 7, 7], id, 4)).toEqual([[7, 7, 7]]);
    expect(quantileBins([], id, 4)).toEqual([]);
    expect(() => quantileBins([1], id, 0)).toThrow(RangeError);
  });
});

function param(name: string, value: number | null, lower95: number | null, upper95: number | null, free: number | null, atBound = false): ParameterLine {
  // Job lines carry null where the fit stage had NaN, though the type says number.
  return { name, value, se: 0.1, lower95, upper95, free, freeSe: 0.1, atBound } as unknown as ParameterLine;
}

function ownFit(model: string, parameters: ParameterLine[], status: 'ok' | 'failed' = 'ok'): FitLine {
  return { model, status, reason: '', logLikelihood: -10, k: parameters.length, aic: 24, aicc: 25, bic: 26, parameters, flatDirection: status === 'ok' && parameters.length === 0, evaluations: 50 };
}

function job(obs: number, truth: Record<string, number>, truthFree: Record<string, number>, fits: FitLine[], generating = 'A'): JobLine {
  return {
    key: `gen=${generating}/obs=${String(obs).padStart(4, '0')}/trials=100`,
    generating,
    observer: obs,
    trials: 100,
    truth,
    truthFree,
    status: 'ok',
    attempts: 1,
    fits,
    comparison: { criterion: 'aic', status: 'won', winner: 'A', contenders: ['A'], delta: {}, weight: {} },
  };
}

/*
 * Hand-worked recovery for generating model A, parameters loss.p and motor.sd.
 *   job  true p  fitted p  95% interval   at bound | true sd fitted sd | free errors (p, sd)
 *   0    1       1.5       [1, 2]     ✓              | 0.1     0.1       |  1, −1
 *   1    2       2         [1.5, 2.5] ✓              | 0.2     0.2       | −1,  1
 *   2    3       2.5       [2, 2.9]   ✗              | 0.3     0.3       |  1, −1
 *   3    4       5         none                yes   | 0.4     0.4       | −1,  1
 *   4    own fit failed
 *   5    5       no value                            | 0.5     0.5       |  –,  3
 * The other model's fit (B) is present in every job and must be ignored.
 */
const ps = [1, 2, 3, 4];
const fittedP = [1.5, 2, 2.5, 5];
const intervals: [number | null, number | null][] = [[1, 2], [1.5, 2.5], [2, 2.9], [null, null]];
const errP = [1, -1, 1, -1];
const errSd = [-1, 1, -1, 1];
const other = ownFit('B', [param('loss.q', 99, 0, 200, 99)]);
const recoveryLines: JobLine[] = [
  ...ps.map((p, i) =>
    job(i, { 'loss.p': p, 'motor.sd': p / 10 }, { 'loss.p': 0, 'motor.sd': 0 }, [
      other,
      ownFit('A', [param('loss.p', fittedP[i], intervals[i][0], intervals[i][1], errP[i], i === 3), param('motor.sd', p / 10, p / 10 - 0.05, p / 10 + 0.05, errSd[i])]),
    ]),
  ),
  job(4, { 'loss.p': 9, 'motor.sd': 9 }, { 'loss.p': 0, 'motor.sd': 0 }, [other, ownFit('A', [], 'failed')]),
  job(5, { 'loss.p': 5, 'motor.sd': 0.5 }, { 'loss.p': 0, 'motor.sd': 0 }, [other, ownFit('A', [param('loss.p', null, null, null, null), param('motor.sd', 0.5, 0.45, 0.55, 3)])]),
];

describe('parameter recovery', () => {
  const [a, d] = parameterRecovery(recoveryLines, ['A', 'D'], { bins: 2 });

  it('summarises only the generating model’s own successful fits', () => {
    expect(a).toMatchObject({ generating: 'A', jobs: 6, fitted: 5, fitFailed: 1, flatDirection: 0 });
    expect(a.parameters.map((p) => p.name)).toEqual(['loss.p', 'motor.sd']);
    // D has no jobs, so nothing to summarise.
    expect(d).toMatchObject({ generating: 'D', jobs: 0, fitted: 0, parameters: [] });
  });

  it('computes n, correlations, bias, RMSE and coverage by hand', () => {
    const p = a.parameters[0];
    // Job 5 has no fitted value: missing.
    expect(p.n).toBe(4);
    expect(p.missing).toBe(1);
    // Errors 0.5, 0, −0.5, 1: bias 1/4; RMSE √((0.25 + 0 + 0.25 + 1)/4) = √0.375.
    expect(p.bias).toBeCloseTo(0.25, 14);
    expect(p.rmse).toBeCloseTo(Math.sqrt(0.375), 14);
    // True mean 2.5, fitted mean 2.75: Σdxdy = 1.875 + 0.375 − 0.125 + 3.375 = 5.5, Σdx² = 5,
    // Σdy² = 1.5625 + 0.5625 + 0.0625 + 5.0625 = 7.25 → r = 5.5/√36.25. The fitted order matches the true order: ρ = 1.
    expect(p.pearson).toBeCloseTo(5.5 / Math.sqrt(36.25), 14);
    expect(p.spearman).toBe(1);
    // Intervals: 1 ∈ [1, 2] ✓, 2 ∈ [1.5, 2.5] ✓, 3 ∉ [2, 2.9]; job 3 has none → 2 of 3, one excluded.
    expect(p.coverage).toMatchObject({ successes: 2, n: 3, estimate: 2 / 3 });
    expect(p.intervalMissing).toBe(1);
    expect(p.atBound).toBe(1);
  });

  it('bins loss parameters by quantiles of the true value', () => {
    const [lo, hi] = a.parameters[0].bins!;
    // True 1, 2 | 3, 4. Errors 0.5, 0 → bias 0.25, RMSE √(0.25/2); −0.5, 1 → bias 0.25, RMSE √(1.25/2).
    expect(lo).toMatchObject({ lower: 1, upper: 2, n: 2 });
    expect(lo.bias).toBeCloseTo(0.25, 14);
    expect(lo.rmse).toBeCloseTo(Math.sqrt(0.125), 14);
    expect(lo.coverage).toMatchObject({ successes: 2, n: 2 });
    expect(hi).toMatchObject({ lower: 3, upper: 4, n: 2, intervalMissing: 1 });
    expect(hi.bias).toBeCloseTo(0.25, 14);
    expect(hi.rmse).toBeCloseTo(Math.sqrt(0.625), 14);
    // Default of 4 bins: one job each, where a correlation is undefined.
    const four = parameterRecovery(recoveryLines, ['A'])[0].parameters[0].bins!;
    expect(four.map((b) => b.n)).toEqual([1, 1, 1, 1]);
    expect(Number.isNaN(four[0].pearson)).toBe(true);
  });

  it('does not bin other parameters, and recovers a perfect fit exactly', () => {
    const sd = a.parameters[1];
    expect(sd.bins).toBeNull();
    expect(sd).toMatchObject({ n: 5, missing: 0, bias: expect.closeTo(0, 15), rmse: 0, pearson: 1, spearman: 1 });
    expect(sd.coverage).toMatchObject({ successes: 5, n: 5 });
  });

  it('does not depend on the order of the lines', () => {
    const reversed = [...recoveryLines].reverse();
    expect(parameterRecovery(reversed, ['A'], { bins: 2 })).toEqual(parameterRecovery(recoveryLines, ['A'], { bins: 2 }));
    expect(tradeoffs(reversed, ['A'])).toEqual(tradeoffs(recoveryLines, ['A']));
  });

  it('gives NaN statistics and an undefined coverage for no points', () => {
    const s = recoveryStats([]);
    expect(s.n).toBe(0);
    expect([s.bias, s.rmse, s.pearson, s.spearman, s.coverage.estimate].every(Number.isNaN)).toBe(true);
  });
});

describe('trade-offs', () => {
  it('correlates estimation errors in the fitted space, pairwise', () => {
    const [t] = tradeoffs(recoveryLines, ['A']);
    expect(t.parameters).toEqual(['loss.p', 'motor.sd']);
    // Jobs 0–3: errors (1, −1), (−1, 1), (1, −1), (−1, 1) → r = −1. Job 5 has an sd error only (3).
    expect(t.n).toEqual([
      [4, 4],
      [4, 5],
    ]);
    expect(t.correlation[0][1]).toBeCloseTo(-1, 14);
    expect(t.correlation[1][0]).toBe(t.correlation[0][1]);
    expect(t.correlation[0][0]).toBe(1);
    expect(t.correlation[1][1]).toBe(1);
  });

  it('is empty for a model without own fits', () => {
    expect(tradeoffs(recoveryLines, ['Z'])).toEqual([{ generating: 'Z', parameters: [], n: [], correlation: [] }]);
  });
});
