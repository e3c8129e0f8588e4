/**
 * The fitting machinery around the likelihood:
 *  - parameter transforms (src/fit/transforms.ts): round trip, bounds at
 *    saturated z, dθ/dz against a finite difference;
 *  - information criteria (src/fit/criteria.ts) on hand-computed numbers;
 *  - compareFits (src/fit/compare.ts): winner, deltas, weights, ties, margins,
 *    failures;
 *  - the nesting table (src/fit/nesting.ts);
 *  - fitModel never returns NaN in what it reports (degenerate data, absurd
 *    models, invalid data fail with a reason);
 *  - crossValidatedLogLik is finite and below the in-sample maximum.
 */
import { describe, it, expect } from 'vitest';
import { toParameter, toFree, jacobian, type Bounded } from '../src/fit/transforms.js';
import { aic, aicc, bic } from '../src/fit/criteria.js';
import { compareFits, TIE_TOLERANCE_LOGLIK } from '../src/fit/compare.js';
import { NESTED_FAMILIES, nestingOf } from '../src/fit/nesting.js';
import { fitModel, type FitResult } from '../src/fit/fitModel.js';
import { crossValidatedLogLik } from '../src/fit/crossValidation.js';
import { defineCandidate, type CandidateModel } from '../src/fit/candidate.js';
import type { Dataset } from '../src/observer/observer.js';
import { fakeFit, model, simulate, stimuliFromPrior, GAMMA_PRIOR, SCALE } from './helpers/fitFixtures.js';

// The bounds the candidates actually use (src/fit/candidate.ts defaults and loss-parameter
// tables on the 0–120 scale), plus odd ones that showed ulp overshoot before clamping.
const BOUNDS: Bounded[] = [
  { lower: 0.12, upper: 120, transform: 'log' }, // noise sd
  { lower: 0.005, upper: 1.5, transform: 'log' }, // Weber fraction
  { lower: 0.12, upper: 60, transform: 'log' }, // motor sd, window, width
  { lower: 0.2, upper: 6, transform: 'log' }, // power exponent
  { lower: 1e-3, upper: 1e3, transform: 'log' }, // default
  { lower: 1e-4, upper: 0.3, transform: 'logit' }, // lapse rate
  { lower: 0.02, upper: 0.98, transform: 'logit' }, // asymmetric level
  { lower: 0.3, upper: 0.9, transform: 'log' }, // exp(log lo) rounds below lo
  { lower: 0.797, upper: 2.183, transform: 'log' }, // exp(log hi) rounds above hi
];

describe('parameter transforms', () => {
  it('toParameter(toFree(θ)) = θ across each range', () => {
    for (const b of BOUNDS) {
      for (let i = 1; i < 50; i++) {
        // interior points, evenly spaced on the transform's own scale
        const u = i / 50;
        const theta = b.transform === 'log' ? b.lower * Math.pow(b.upper / b.lower, u) : b.lower + (b.upper - b.lower) * u;
        const back = toParameter(b, toFree(b, theta));
        // exact algebraic inverse; tolerance is a few ulps amplified by logit/log (common practice)
        expect(Math.abs(back - theta) / theta).toBeLessThan(1e-12);
      }
    }
  });

  it('toFree(toParameter(z)) = z for moderate z', () => {
    for (const b of BOUNDS) {
      for (let z = -12; z <= 12; z += 0.75) {
        // exact inverse; |z| ≤ 12 keeps σ(z) away from 1 − 1e-12 clamping
        expect(toFree(b, toParameter(b, z))).toBeCloseTo(z, 6);
      }
    }
  });

  it('stays inside [lower, upper] for extreme z (definition of the bounded maps)', () => {
    const zs = [-Infinity, -1e308, -1e4, -800, -40, -37, -20, 0, 20, 37, 40, 800, 1e4, 1e308, Infinity];
    for (const b of BOUNDS) {
      for (const z of zs) {
        const theta = toParameter(b, z);
        expect(Number.isFinite(theta)).toBe(true);
        expect(theta).toBeGreaterThanOrEqual(b.lower);
        expect(theta).toBeLessThanOrEqual(b.upper);
      }
      // saturated z reaches the bounds themselves (to a relative 1e-12)
      expect(toParameter(b, -1e4) / b.lower).toBeCloseTo(1, 12);
      expect(toParameter(b, 1e4) / b.upper).toBeCloseTo(1, 12);
    }
  });

  it('toParameter is monotone increasing in z', () => {
    for (const b of BOUNDS) {
      let prev = -Infinity;
      for (let z = -30; z <= 30; z += 0.5) {
        const t = toParameter(b, z);
        expect(t).toBeGreaterThanOrEqual(prev);
        prev = t;
      }
    }
  });

  it('jacobian = dθ/dz by central finite difference', () => {
    for (const b of BOUNDS) {
      for (const z of [-8, -3, -1, -0.2, 0, 0.4, 1.5, 3, 8]) {
        const h = 1e-5;
        // central difference, O(h²) error (Abramowitz & Stegun §25.3, from memory)
        const fd = (toParameter(b, z + h) - toParameter(b, z - h)) / (2 * h);
        const j = jacobian(b, z);
        expect(j).toBeGreaterThan(0);
        expect(Math.abs(j - fd) / Math.abs(fd)).toBeLessThan(1e-7);
      }
    }
  });
});

describe('information criteria on hand numbers', () => {
  // log L = −100, k = 3, n = 50.
  it('AIC = −2 log L + 2k (Akaike 1974)', () => {
    expect(aic(-100, 3)).toBe(206); // 200 + 6
    expect(aic(12.5, 0)).toBe(-25);
  });
  it('AICc = AIC + 2k(k+1)/(n−k−1) (Hurvich & Tsai 1989)', () => {
    // 206 + 2·3·4/46 = 206 + 24/46 = 206.52173913043478…
    expect(aicc(-100, 3, 50)).toBeCloseTo(206.52173913043478, 10);
    // k = 1, n = 10: 2·1·2/8 = 0.5 on top of AIC = 202
    expect(aicc(-100, 1, 10)).toBeCloseTo(202.5, 12);
    // undefined for n ≤ k + 1 (the correction's denominator vanishes); reported as +∞, never NaN
    expect(aicc(-100, 3, 4)).toBe(Infinity);
    expect(aicc(-100, 3, 3)).toBe(Infinity);
  });
  it('BIC = −2 log L + k ln n (Schwarz 1978)', () => {
    // 200 + 3·ln 50 = 200 + 3·3.912023005428146 = 211.73606901628444
    expect(bic(-100, 3, 50)).toBeCloseTo(211.73606901628444, 10);
    // ln 1 = 0: no penalty for a single observation
    expect(bic(-7, 4, 1)).toBe(14);
  });
});

describe('compareFits', () => {
  const n = 200;
  // Hand numbers. BIC with n = 200: ln 200 = 5.298317366548036.
  //  A: log L −500, k 3 → 1015.894952…;  B: log L −497, k 4 → 1015.193269…;  C: −510, k 2 → 1030.596634…
  const A = fakeFit('A', -500, 3, n);
  const B = fakeFit('B', -497, 4, n);
  const C = fakeFit('C', -510, 2, n);

  it('the lowest criterion wins; deltas are differences to the best', () => {
    const byBic = compareFits([A, B, C], 'bic');
    expect(byBic.status).toBe('won');
    expect(byBic.winner).toBe('B');
    expect(byBic.contenders).toEqual(['B']);
    // Δ_A = (1000 + 3 ln 200) − (994 + 4 ln 200) = 6 − ln 200 (Schwarz 1978 criterion differences)
    expect(byBic.delta.B).toBe(0);
    expect(byBic.delta.A).toBeCloseTo(6 - Math.log(200), 10);
    expect(byBic.delta.C).toBeCloseTo(1020 - 994 - 2 * Math.log(200), 10);
    // AIC: A 1006, B 1002, C 1024 (Akaike 1974)
    const byAic = compareFits([A, B, C], 'aic');
    expect(byAic.winner).toBe('B');
    expect(byAic.delta).toEqual({ A: 4, B: 0, C: 22 });
  });

  it('weights are exp(−Δ/2)/Σexp(−Δ/2) and sum to 1 (Burnham & Anderson 2002, §2.9)', () => {
    const c = compareFits([A, B, C], 'aic');
    const z = 1 + Math.exp(-2) + Math.exp(-11);
    expect(c.weight.B).toBeCloseTo(1 / z, 12);
    expect(c.weight.A).toBeCloseTo(Math.exp(-2) / z, 12);
    expect(c.weight.C).toBeCloseTo(Math.exp(-11) / z, 12);
    for (const crit of ['aic', 'aicc', 'bic'] as const) {
      const w = compareFits([C, A, B], crit).weight;
      expect(w.A + w.B + w.C).toBeCloseTo(1, 14);
    }
  });

  it("an exact tie is 'tied' with both contenders, in every listing order", () => {
    const X = fakeFit('X', -500, 3, n);
    const Y = fakeFit('Y', -500, 3, n);
    const W = fakeFit('W', -503, 3, n);
    const orders: FitResult[][] = [
      [X, Y, W],
      [Y, X, W],
      [W, X, Y],
      [W, Y, X],
      [X, W, Y],
      [Y, W, X],
    ];
    for (const fits of orders) {
      for (const crit of ['aic', 'aicc', 'bic'] as const) {
        const c = compareFits(fits, crit);
        expect(c.status).toBe('tied');
        expect(c.winner).toBeNull();
        expect([...c.contenders].sort()).toEqual(['X', 'Y']);
        // equal scores get equal weights (Burnham & Anderson 2002, §2.9)
        expect(c.weight.X).toBeCloseTo(c.weight.Y, 14);
      }
    }
  });

  it('log-likelihoods closer than the tie tolerance tie; further apart they do not', () => {
    const near = compareFits([fakeFit('P', -500, 3, n), fakeFit('Q', -500 - 0.5 * TIE_TOLERANCE_LOGLIK, 3, n)], 'bic');
    expect(near.status).toBe('tied');
    expect([...near.contenders].sort()).toEqual(['P', 'Q']);
    const far = compareFits([fakeFit('P', -500, 3, n), fakeFit('Q', -500 - 2 * TIE_TOLERANCE_LOGLIK, 3, n)], 'bic');
    expect(far.status).toBe('won');
    expect(far.winner).toBe('P');
  });

  it("a user margin wider than the gap makes the comparison 'undecided'", () => {
    // AIC gap between B and A is 4 (hand numbers above)
    const wide = compareFits([A, B, C], 'aic', 5);
    expect(wide.status).toBe('undecided');
    expect(wide.winner).toBeNull();
    expect(wide.contenders).toEqual(['B', 'A']); // best first
    const narrow = compareFits([A, B, C], 'aic', 3);
    expect(narrow.status).toBe('won');
    expect(narrow.winner).toBe('B');
  });

  it("any failed fit makes the comparison 'failed', never won by the rest", () => {
    const F = fakeFit('F', NaN, 3, n, 'failed');
    for (const fits of [
      [A, B, F],
      [F, A, B],
      [B, F],
    ]) {
      const c = compareFits(fits, 'bic');
      expect(c.status).toBe('failed');
      expect(c.winner).toBeNull();
      expect(c.contenders).toEqual([]);
      expect(c.failed).toEqual(['F']);
      expect(c.weight.F).toBe(0);
    }
  });

  it('cross-validated comparison uses −2·(held-out log-likelihood)', () => {
    const c = compareFits([A, B], 'cv', 0, { A: -300, B: -302 });
    expect(c.winner).toBe('A');
    expect(c.delta.B).toBeCloseTo(4, 12);
  });
});

describe('nesting table', () => {
  it('power contains squared (p = 2) and absolute (p = 1) — |e|^p by definition', () => {
    const sq = nestingOf('power', 'squared');
    expect(sq).not.toBeNull();
    expect(sq!.outer).toBe('power');
    expect(sq!.inner).toBe('squared');
    expect(sq!.at).toMatch(/exponent\s*=\s*2/);
    // order of the arguments does not matter
    const ab = nestingOf('absolute', 'power');
    expect(ab).not.toBeNull();
    expect(ab!.outer).toBe('power');
    expect(ab!.inner).toBe('absolute');
    expect(ab!.at).toMatch(/exponent\s*=\s*1/);
  });
  it('asymmetric-linear contains absolute at level ½ (the τ-quantile at τ = ½ is the median; Berger 1985, §4.4.2)', () => {
    expect(nestingOf('asymmetric-linear', 'absolute')?.at).toMatch(/0\.5/);
  });
  it('unrelated families are not nested', () => {
    expect(nestingOf('squared', 'absolute')).toBeNull();
    expect(nestingOf('hit-or-miss', 'asymmetric-linear')).toBeNull();
    expect(nestingOf('power', 'power')).toBeNull();
    // no family is listed as nesting itself
    for (const e of NESTED_FAMILIES) expect(e.outer).not.toBe(e.inner);
  });
});

/** Nothing a fit reports is NaN, except standard errors where the Hessian is unusable. */
function expectNoNaN(f: FitResult, m: CandidateModel): void {
  if (f.status === 'failed') {
    expect(f.reason.length).toBeGreaterThan(0);
    expect(f.logLikelihood).toBe(-Infinity);
    for (const v of [f.aic, f.aicc, f.bic]) expect(v).toBe(Infinity);
    return;
  }
  for (const v of [f.logLikelihood, f.aic, f.aicc, f.bic]) expect(Number.isFinite(v)).toBe(true);
  expect(f.parameters).toHaveLength(m.free.length);
  f.parameters.forEach((p, i) => {
    expect(Number.isFinite(p.value)).toBe(true);
    expect(Number.isFinite(p.free)).toBe(true);
    expect(p.value).toBeGreaterThanOrEqual(m.free[i].lower);
    expect(p.value).toBeLessThanOrEqual(m.free[i].upper);
    // se is documented as NaN when unavailable: then the Hessian must have been flagged
    if (Number.isNaN(p.se)) expect(f.flatDirection).toBe(true);
    else expect(p.se).toBeGreaterThanOrEqual(0);
  });
}

describe('a fit never returns NaN', () => {
  const n = 60;
  const stimulus = stimuliFromPrior(GAMMA_PRIOR, n, 'degenerate');
  const condition = new Int32Array(n);
  const squared = model({ loss: { family: 'squared' }, noise: { family: 'constant', sd: 3 } });

  it('responses all at the upper end of a censored scale', () => {
    const data: Dataset = { stimulus, condition, response: new Float64Array(n).fill(SCALE.upper) };
    const f = fitModel(squared, data, { starts: 2 });
    expectNoNaN(f, squared);
  }, 120_000);

  it('responses all at the lower end, Weber noise and absolute loss', () => {
    const m = model({ loss: { family: 'absolute' }, noise: { family: 'scalar', weber: 0.2 } });
    const f = fitModel(m, { stimulus, condition, response: new Float64Array(n).fill(SCALE.lower) }, { starts: 2 });
    expectNoNaN(f, m);
  }, 120_000);

  it('an absurd model: Weber noise (needs positive stimuli) on negative stimuli', () => {
    const m = model({ loss: { family: 'squared' }, noise: { family: 'scalar', weber: 0.2 } });
    const f = fitModel(m, { stimulus: stimulus.map((x) => -x), condition, response: stimulus.slice() }, { starts: 2 });
    expectNoNaN(f, m);
  }, 120_000);

  it('an absurd model: responses a million units beyond an open scale', () => {
    const m: CandidateModel = { ...squared, scale: { lower: 0, upper: 120, ends: 'open' } };
    const f = fitModel(m, { stimulus, condition, response: new Float64Array(n).fill(1e6) }, { starts: 2 });
    expectNoNaN(f, m);
  }, 120_000);

  it("invalid data (NaN responses, unknown condition, ragged arrays) is 'failed' with a reason", () => {
    const good = stimulus.map((x) => x + 1);
    const cases: [Dataset, RegExp][] = [
      [{ stimulus, condition, response: good.map((r, i) => (i === 7 ? NaN : r)) }, /trial 7: response/],
      [{ stimulus: stimulus.map((x, i) => (i === 3 ? Infinity : x)), condition, response: good }, /trial 3: stimulus/],
      [{ stimulus, condition: condition.map((c, i) => (i === 5 ? 2 : c)), response: good }, /trial 5: condition 2/],
      [{ stimulus, condition, response: good.subarray(0, n - 1) }, /differ in length/],
    ];
    for (const [data, reason] of cases) {
      const f = fitModel(squared, data, { starts: 2 });
      expect(f.status).toBe('failed');
      expect(f.reason).toMatch(reason);
      expectNoNaN(f, squared);
    }
  });

  it('a model with no free parameters reports its log-likelihood', () => {
    const fixed = defineCandidate({
      name: 'fixed',
      loss: { family: 'squared' },
      prior: GAMMA_PRIOR,
      conditions: [{ name: 'c', noise: { family: 'constant', sd: 3 } }],
      scale: SCALE,
      motorSd: 1.5,
      lapseRate: 0.02,
      free: [],
    });
    const f = fitModel(fixed, simulate(fixed, 40, 'fixed'));
    expect(f.status).toBe('ok');
    expect(f.k).toBe(0);
    // AIC = −2 log L with k = 0 (Akaike 1974)
    expect(f.aic).toBeCloseTo(-2 * f.logLikelihood, 10);
    expectNoNaN(f, fixed);
  });
});

describe('crossValidatedLogLik', () => {
  it('is finite and below the in-sample maximum (100 trials, 3 folds, 2 starts)', () => {
    const m = model({ loss: { family: 'squared' }, noise: { family: 'constant', sd: 3 } });
    const data = simulate(m, 100, 'cv');
    const full = fitModel(m, data, { starts: 2 });
    expect(full.status).toBe('ok');
    const cv = crossValidatedLogLik(m, data, 3, { starts: 2 });
    expect(Number.isFinite(cv)).toBe(true);
    // The in-sample maximum is optimistic relative to held-out data (Stone 1974; Hastie,
    // Tibshirani & Friedman, Elements of Statistical Learning, §7.10; from memory): CV total < maximised total.
    expect(cv).toBeLessThan(full.logLikelihood);
    // and the optimism is a few nats per parameter here, not hundreds (a sanity bound, common practice)
    expect(cv).toBeGreaterThan(full.logLikelihood - 30);
  }, 300_000);
});

describe('default fitting bounds', () => {
  // Noise on log x is unitless, so its default bounds must not scale with the
  // response range (a 0–3000 ms scale once gave log-space sd bounds of [30, 1500]).
  const candidate = (family: 'log-gaussian' | 'constant') =>
    defineCandidate({
      name: 'm',
      loss: { family: 'squared' },
      prior: { family: 'log-normal', mu: 6.5, sigma: 0.4 },
      conditions: [{ name: 'tone', noise: family === 'log-gaussian' ? { family, sd: 0.2 } : { family, sd: 80 } }],
      scale: { lower: 0, upper: 3000, ends: 'censor' },
      motorSd: 30,
      lapseRate: 0.02,
    } as Parameters<typeof defineCandidate>[0]);
  it('log-space noise sd keeps unitless bounds whatever the scale', () => {
    const sd = candidate('log-gaussian').free.find((p) => p.name === 'noise.tone.sd')!;
    expect([sd.lower, sd.upper]).toEqual([0.01, 3]);
  });
  it('linear noise sd scales with the response range', () => {
    const sd = candidate('constant').free.find((p) => p.name === 'noise.tone.sd')!;
    expect([sd.lower, sd.upper]).toEqual([30, 1500]);
  });
});
