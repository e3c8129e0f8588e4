/**
 * Every family in src/observer/distributions against an independent
 * implementation (@stdlib/stats-base-dists-*, a dev dependency never used at
 * run time); the Gaussian mixture against a weighted sum of @stdlib normal
 * pdfs and cdfs. Closed forms: Johnson, Kotz & Balakrishnan, Continuous
 * Univariate Distributions vol. 1 (normal ch. 13, log-normal ch. 14, gamma
 * ch. 17).
 *
 * Tolerances are measured worst cases rounded up. The gamma family is limited
 * by jstat (the runtime library): jstat.gammaln is a Lanczos fit good to ~1e−15
 * for small shapes but 4.9e−13 at k = 10, 1.0e−11 at k = 20 and 5.8e−11 at
 * k = 50 (absolute, in log Γ), and jstat.lowRegGamma's continued fraction is off
 * by 4e−11 relative at k = 0.5, x ≈ 1.5. Those cases carry their own measured
 * tolerance below instead of loosening the rest. (The constant log Γ(k) error
 * cancels from every posterior, so the observer model does not feel it.)
 */
import { describe, it, expect } from 'vitest';
import normal from '@stdlib/stats-base-dists-normal';
import lognormal from '@stdlib/stats-base-dists-lognormal';
import gammaDist from '@stdlib/stats-base-dists-gamma';
import uniformDist from '@stdlib/stats-base-dists-uniform';
import { Gaussian, gaussianSchema } from '../src/observer/distributions/gaussian.js';
import { LogNormal, logNormalSchema } from '../src/observer/distributions/logNormal.js';
import { Gamma, gammaSchema } from '../src/observer/distributions/gamma.js';
import { Uniform, uniformSchema } from '../src/observer/distributions/uniform.js';
import { GaussianMixture, gaussianMixtureSchema } from '../src/observer/distributions/gaussianMixture.js';
import { createDistribution, distributionSchema } from '../src/observer/distributions/registry.js';
import type { Distribution } from '../src/observer/distributions/types.js';
import { streamFromKey } from '../src/numerics/rng.js';

const relErr = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.abs(b));
/** Error of a log density, relative to max(1, |reference|). */
const logErr = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.max(1, Math.abs(b)));
const linspace = (lo: number, hi: number, n: number) => Array.from({ length: n }, (_, i) => lo + ((hi - lo) * i) / (n - 1));
const probs = linspace(0, 1, 401).slice(1, -1);

/**
 * quantile(cdf(x)) = x up to the conditioning of the inverse: a cdf value is known
 * to about one ulp (2.2e−16·F), which moves x by that over the density.
 */
function expectRoundTrip(d: Distribution, xs: number[], label: string): void {
  for (const x of xs) {
    const F = d.cdf(x);
    if (F < 1e-12 || F > 0.999) continue;
    const back = d.quantile(F);
    const tol = 1e-13 * Math.max(1, Math.abs(x)) + (8 * 2.2e-16 * F) / Math.exp(d.logPdf(x));
    expect(Math.abs(back - x), `${label} x = ${x}`).toBeLessThanOrEqual(tol); // measured ≤ 7.3 × (1e−14·max(1,|x|) + 2.2e−16·F/f)
  }
}

describe('gaussian', () => {
  const cases: [number, number][] = [
    [0, 1],
    [3, 0.2],
    [-50, 7],
    [1000, 30],
  ];
  it.each(cases)('N(%d, %d²): logPdf, cdf (z from −37 to 8), quantile against @stdlib normal', (mu, sd) => {
    const d = new Gaussian(mu, sd);
    for (const z of linspace(-37, 8, 901)) {
      const x = mu + sd * z;
      expect(logErr(d.logPdf(x), normal.logpdf(x, mu, sd))).toBeLessThanOrEqual(2e-15); // independent implementation: @stdlib; measured 6.0e-16
      // independent implementation: @stdlib; measured 2.3e-13 (standardising (x − μ)/σ rounds z, and
      // the tail's relative error is ≈ z²·δz)
      expect(relErr(d.cdf(x), normal.cdf(x, mu, sd)), `x = ${x}`).toBeLessThanOrEqual(5e-13);
    }
    for (const p of probs) {
      // independent implementation: @stdlib (its erfinv(2p − 1) quantile is fine for p ∈ [1/400, 399/400]); measured 2.3e-14 sd
      expect(Math.abs(d.quantile(p) - normal.quantile(p, mu, sd)) / sd).toBeLessThanOrEqual(1e-13);
    }
    expectRoundTrip(d, linspace(mu - 8 * sd, mu + 8 * sd, 301), 'gaussian');
    expect(d.mean()).toBe(normal.mean(mu, sd)); // independent implementation: @stdlib
  });
});

describe('log-normal', () => {
  const cases: [number, number][] = [
    [0, 1],
    [2, 0.3],
    [-1, 2],
    [5, 0.05],
  ];
  it.each(cases)('LN(%d, %d): logPdf, cdf, quantile against @stdlib lognormal', (mu, sigma) => {
    const d = new LogNormal(mu, sigma);
    for (const z of linspace(-37, 8, 901)) {
      const x = Math.exp(mu + sigma * z);
      expect(logErr(d.logPdf(x), lognormal.logpdf(x, mu, sigma))).toBeLessThanOrEqual(2e-15); // independent implementation: @stdlib; measured 8.9e-16
      expect(relErr(d.cdf(x), lognormal.cdf(x, mu, sigma)), `x = ${x}`).toBeLessThanOrEqual(5e-13); // independent implementation: @stdlib; measured 2.3e-13
    }
    for (const p of probs) {
      expect(relErr(d.quantile(p), lognormal.quantile(p, mu, sigma))).toBeLessThanOrEqual(1e-13); // independent implementation: @stdlib; measured 4.2e-14
    }
    expect(d.logPdf(0)).toBe(-Infinity);
    expect(d.logPdf(-1)).toBe(-Infinity);
    expect(d.cdf(0)).toBe(0);
    expect(d.cdf(-1)).toBe(0);
    expect(lognormal.logpdf(0, mu, sigma)).toBe(-Infinity); // independent implementation: @stdlib
    expectRoundTrip(d, linspace(-6, 6, 301).map((z) => Math.exp(mu + sigma * z)), 'log-normal');
    // mean e^(μ+σ²/2) (JKB vol. 1 ch. 14); independent implementation: @stdlib
    expect(relErr(d.mean(), lognormal.mean(mu, sigma))).toBeLessThanOrEqual(1e-15);
  });
});

describe('gamma (shape k, scale θ; @stdlib takes the rate 1/θ)', () => {
  // [k, θ, logPdf abs tol, cdf rel tol]; measured worst cases in the comments (all from jstat's gammaln/lowRegGamma)
  const cases: [number, number, number, number][] = [
    [0.5, 1, 2e-13, 1e-10], // measured logPdf 4.4e-14, cdf 4.1e-11 (lowRegGamma continued fraction near x = 1.5)
    [1, 1, 1e-14, 2e-13], // measured 4.4e-16, 7.4e-14
    [1.5, 2, 2e-14, 5e-13], // measured 5.8e-15, 1.9e-13
    [2, 1, 1e-14, 1e-14], // measured 1.1e-15, 1.5e-15
    [3, 5, 1e-14, 1e-14], // measured 3.6e-15, 2.1e-15
    [7.3, 0.4, 1e-13, 1e-13], // measured 3.4e-14, 3.4e-14
    [10, 0.3, 1e-12, 1e-12], // measured 4.9e-13, 5.0e-13 (gammaln)
    [50, 1, 1e-10, 1e-10], // measured 5.8e-11, 5.8e-11 (gammaln)
  ];
  it.each(cases)('Gamma(%d, %d): logPdf, cdf, quantile against @stdlib gamma', (k, theta, tolLog, tolCdf) => {
    const d = new Gamma(k, theta);
    const rate = 1 / theta;
    for (let i = 1; i < 2000; i++) {
      const x = gammaDist.quantile(i / 2000, k, rate);
      expect(Math.abs(d.logPdf(x) - gammaDist.logpdf(x, k, rate)), `x = ${x}`).toBeLessThanOrEqual(tolLog); // independent implementation: @stdlib
      expect(relErr(d.cdf(x), gammaDist.cdf(x, k, rate)), `x = ${x}`).toBeLessThanOrEqual(tolCdf); // independent implementation: @stdlib
    }
    // lower tail (relative) and upper tail (absolute: F is within ulps of 1 there)
    for (const p of [1e-12, 1e-8, 1e-5]) {
      const x = gammaDist.quantile(p, k, rate);
      expect(relErr(d.cdf(x), gammaDist.cdf(x, k, rate))).toBeLessThanOrEqual(tolCdf); // independent implementation: @stdlib
    }
    for (const p of [1e-5, 1e-10, 1e-14]) {
      const x = gammaDist.quantile(1 - p, k, rate);
      expect(Math.abs(d.cdf(x) - gammaDist.cdf(x, k, rate))).toBeLessThanOrEqual(1e-13); // independent implementation: @stdlib; measured 5.8e-14 (k = 50)
    }
    // quantile: the independent cdf at our quantile returns p. (Comparing x directly is ill-conditioned in
    // the upper tail: there both libraries' quantiles differ by 1.7e−10 relative while both invert to p.)
    for (const p of [1e-12, 1e-8, 1e-5, ...probs]) {
      const q = d.quantile(p);
      // relative to p, the same measure as the cdf check (our quantile inverts our cdf, whose error it inherits)
      const err = Math.abs(gammaDist.cdf(q, k, rate) - p) / p;
      expect(err, `p = ${p}`).toBeLessThanOrEqual(tolCdf + 1e-14); // independent implementation: @stdlib
    }
    expectRoundTrip(d, linspace(0.01, 1, 150).map((t) => gammaDist.quantile(t * 0.998, k, rate)), 'gamma');
    expect(relErr(d.mean(), gammaDist.mean(k, rate))).toBeLessThanOrEqual(1e-15); // mean kθ (JKB vol. 1 ch. 17); @stdlib
  });

  it('density at 0 and below', () => {
    expect(new Gamma(3, 2).logPdf(0)).toBe(-Infinity);
    expect(new Gamma(1, 2).logPdf(0)).toBe(-Math.log(2)); // exponential density 1/θ at 0 (JKB vol. 1 ch. 19)
    expect(new Gamma(0.5, 2).logPdf(0)).toBe(Infinity);
    expect(new Gamma(3, 2).logPdf(-1)).toBe(-Infinity);
    expect(new Gamma(3, 2).cdf(0)).toBe(0);
    expect(new Gamma(3, 2).quantile(0)).toBe(0);
    expect(new Gamma(3, 2).quantile(1)).toBe(Infinity);
  });
});

describe('uniform', () => {
  const cases: [number, number][] = [
    [0, 1],
    [-3, 7],
    [100, 100.5],
  ];
  it.each(cases)('U(%d, %d): logPdf, cdf, quantile against @stdlib uniform', (a, b) => {
    const d = new Uniform(a, b);
    for (const t of linspace(-0.1, 1.1, 121)) {
      const x = a + (b - a) * t;
      // independent implementation: @stdlib; measured exact (0)
      expect(Math.abs(d.logPdf(x) - uniformDist.logpdf(x, a, b)) || 0).toBeLessThanOrEqual(1e-15);
      expect(d.logPdf(x) === -Infinity).toBe(uniformDist.logpdf(x, a, b) === -Infinity);
      expect(Math.abs(d.cdf(x) - uniformDist.cdf(x, a, b))).toBeLessThanOrEqual(2e-16);
    }
    // closed support: the ends carry the density
    expect(d.logPdf(a)).toBe(-Math.log(b - a));
    expect(d.logPdf(b)).toBe(-Math.log(b - a));
    for (const p of linspace(0, 1, 101)) expect(Math.abs(d.quantile(p) - uniformDist.quantile(p, a, b))).toBeLessThanOrEqual(1e-15 * Math.max(1, Math.abs(a), Math.abs(b)));
    expectRoundTrip(d, linspace(a + 1e-3 * (b - a), b - 1e-3 * (b - a), 101), 'uniform');
    expect(d.mean()).toBe(uniformDist.mean(a, b)); // @stdlib
    expect(d.support).toEqual([a, b]);
  });
});

describe('gaussian mixture against Σ w_k·(@stdlib normal)', () => {
  const mixtures: { weight: number; mean: number; sd: number }[][] = [
    [
      { weight: 1, mean: -2, sd: 1 },
      { weight: 2, mean: 3, sd: 1.5 },
    ],
    [
      { weight: 0.2, mean: 0, sd: 0.1 },
      { weight: 0.5, mean: 1, sd: 3 },
      { weight: 0.3, mean: 10, sd: 0.5 },
    ],
    [{ weight: 3, mean: 5, sd: 2 }],
  ];
  it.each(mixtures.map((m, i) => [i, m] as const))('mixture %i: logPdf, cdf, quantile', (_i, comps) => {
    const d = new GaussianMixture(comps);
    const W = comps.reduce((s, c) => s + c.weight, 0);
    // independent implementation: weighted sums of @stdlib normal pdf/cdf (weights normalised to 1)
    const pdf = (x: number) => comps.reduce((s, c) => s + (c.weight / W) * normal.pdf(x, c.mean, c.sd), 0);
    const cdf = (x: number) => comps.reduce((s, c) => s + (c.weight / W) * normal.cdf(x, c.mean, c.sd), 0);
    for (const x of linspace(-30, 30, 2001)) {
      const p = pdf(x);
      if (p > 1e-290) expect(logErr(d.logPdf(x), Math.log(p)), `x = ${x}`).toBeLessThanOrEqual(2e-15); // measured 5.6e-16
      const c = cdf(x);
      if (c > 1e-290) expect(relErr(d.cdf(x), c), `x = ${x}`).toBeLessThanOrEqual(3e-13); // measured 6.8e-14
    }
    for (const p of [1e-12, 1e-8, 1e-4, ...probs]) {
      // bisection to 1e−15 relative in x; measured ≤ 2e−14 relative in p
      const q = d.quantile(p);
      expect(Math.abs(cdf(q) - p) / Math.min(p, 1 - p), `p = ${p}`).toBeLessThanOrEqual(1e-12);
    }
    expectRoundTrip(d, linspace(-8, 14, 301), 'mixture');
    expect(Math.abs(d.mean() - comps.reduce((s, c) => s + (c.weight / W) * c.mean, 0))).toBeLessThanOrEqual(1e-15 * 10);
    expect(d.logConcave).toBe(comps.length === 1);
  });
});

describe('samples from a seeded stream match the moments', () => {
  // Sample mean within 4.5 standard errors σ/√n, sample variance within 4.5 standard
  // errors σ²·√((κ − 1)/n) (κ = μ₄/σ⁴; e.g. Kendall & Stuart vol. 1, §10.5 (from memory)).
  // Moments from @stdlib (mean, variance, excess kurtosis) or, for the mixture, from
  // the component moments.
  interface Moments {
    mean: number;
    variance: number;
    kurtosis: number; // μ₄/σ⁴ (not excess)
  }
  const mixtureMoments = (comps: { weight: number; mean: number; sd: number }[]): Moments => {
    const W = comps.reduce((s, c) => s + c.weight, 0);
    const mean = comps.reduce((s, c) => s + (c.weight / W) * c.mean, 0);
    const variance = comps.reduce((s, c) => s + (c.weight / W) * ((c.mean - mean) ** 2 + c.sd ** 2), 0);
    // E(X−μ)⁴ for a normal component: d⁴ + 6d²σ² + 3σ⁴ with d = μ_k − μ
    const m4 = comps.reduce((s, c) => {
      const dd = c.mean - mean;
      return s + (c.weight / W) * (dd ** 4 + 6 * dd ** 2 * c.sd ** 2 + 3 * c.sd ** 4);
    }, 0);
    return { mean, variance, kurtosis: m4 / variance ** 2 };
  };
  const mix = [
    { weight: 1, mean: -2, sd: 1 },
    { weight: 2, mean: 3, sd: 1.5 },
  ];
  const cases: [string, Distribution, Moments][] = [
    ['gaussian', new Gaussian(3, 2), { mean: normal.mean(3, 2), variance: normal.variance(3, 2), kurtosis: normal.kurtosis(3, 2) + 3 }],
    ['log-normal', new LogNormal(1, 0.5), { mean: lognormal.mean(1, 0.5), variance: lognormal.variance(1, 0.5), kurtosis: lognormal.kurtosis(1, 0.5) + 3 }],
    ['gamma k=3', new Gamma(3, 5), { mean: gammaDist.mean(3, 0.2), variance: gammaDist.variance(3, 0.2), kurtosis: gammaDist.kurtosis(3, 0.2) + 3 }],
    ['gamma k=0.5', new Gamma(0.5, 2), { mean: gammaDist.mean(0.5, 0.5), variance: gammaDist.variance(0.5, 0.5), kurtosis: gammaDist.kurtosis(0.5, 0.5) + 3 }],
    ['uniform', new Uniform(-3, 7), { mean: uniformDist.mean(-3, 7), variance: uniformDist.variance(-3, 7), kurtosis: uniformDist.kurtosis(-3, 7) + 3 }],
    ['mixture', new GaussianMixture(mix), mixtureMoments(mix)],
  ];
  it.each(cases)('%s', (name, d, mom) => {
    const n = 40000;
    const rand = streamFromKey(`distributions.test/${name}`);
    let s = 0;
    let s2 = 0;
    const xs = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const x = d.sample(rand);
      xs[i] = x;
      s += x;
    }
    const mean = s / n;
    for (let i = 0; i < n; i++) s2 += (xs[i] - mean) ** 2;
    const variance = s2 / (n - 1);
    const seMean = Math.sqrt(mom.variance / n);
    const seVar = mom.variance * Math.sqrt((mom.kurtosis - 1) / n);
    expect(Math.abs(mean - mom.mean) / seMean).toBeLessThanOrEqual(4.5);
    expect(Math.abs(variance - mom.variance) / seVar).toBeLessThanOrEqual(4.5);
    const [lo, hi] = d.support;
    expect(xs.every((x) => x >= lo && x <= hi)).toBe(true);
    // the distribution's own mean() agrees with the reference moment
    expect(relErr(d.mean(), mom.mean)).toBeLessThanOrEqual(1e-15);
  });

  it('the same key gives the same draws; another key gives others', () => {
    const d = new Gamma(3, 5);
    const a = Array.from({ length: 5 }, ((r) => () => d.sample(r))(streamFromKey('k1')));
    const b = Array.from({ length: 5 }, ((r) => () => d.sample(r))(streamFromKey('k1')));
    const c = Array.from({ length: 5 }, ((r) => () => d.sample(r))(streamFromKey('k2')));
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
  });
});

describe('schemas reject bad parameters and name the field', () => {
  const issuePaths = (r: { success: boolean; error?: { issues: { path: PropertyKey[] }[] } }) => (r.success ? [] : r.error!.issues.map((i) => i.path.join('.')));

  it('non-positive sd / sigma / shape / scale', () => {
    expect(issuePaths(gaussianSchema.safeParse({ family: 'gaussian', mean: 0, sd: -1 }))).toEqual(['sd']);
    expect(issuePaths(gaussianSchema.safeParse({ family: 'gaussian', mean: 0, sd: 0 }))).toEqual(['sd']);
    expect(issuePaths(logNormalSchema.safeParse({ family: 'log-normal', mu: 0, sigma: -0.5 }))).toEqual(['sigma']);
    expect(issuePaths(gammaSchema.safeParse({ family: 'gamma', shape: -2, scale: 1 }))).toEqual(['shape']);
    expect(issuePaths(gammaSchema.safeParse({ family: 'gamma', shape: 2, scale: 0 }))).toEqual(['scale']);
    const mixture = gaussianMixtureSchema.safeParse({
      family: 'gaussian-mixture',
      components: [
        { weight: 1, mean: 0, sd: 1 },
        { weight: 1, mean: 0, sd: -2 },
      ],
    });
    expect(issuePaths(mixture)).toEqual(['components.1.sd']);
    expect(issuePaths(gaussianMixtureSchema.safeParse({ family: 'gaussian-mixture', components: [{ weight: -1, mean: 0, sd: 1 }] }))).toEqual(['components.0.weight']);
  });

  it('upper ≤ lower', () => {
    for (const [lower, upper] of [
      [2, 2],
      [3, 1],
    ]) {
      const r = uniformSchema.safeParse({ family: 'uniform', lower, upper });
      expect(issuePaths(r)).toEqual(['upper']);
      expect(r.success ? '' : r.error.issues[0].message).toMatch(/upper/);
    }
    expect(uniformSchema.safeParse({ family: 'uniform', lower: 1, upper: 3 }).success).toBe(true);
  });

  it('unknown keys', () => {
    const r = gaussianSchema.safeParse({ family: 'gaussian', mean: 0, sd: 1, sdd: 2 });
    expect(r.success).toBe(false);
    const issue = r.success ? undefined : r.error.issues[0];
    expect(issue?.code).toBe('unrecognized_keys');
    expect(issue && 'keys' in issue ? issue.keys : []).toEqual(['sdd']);
    expect(issue?.message).toMatch(/sdd/);
    const m = gaussianMixtureSchema.safeParse({ family: 'gaussian-mixture', components: [{ weight: 1, mean: 0, sd: 1, extra: 1 }] });
    expect(m.success ? [] : m.error.issues.map((i) => [i.path.join('.'), 'keys' in i ? i.keys : []])).toEqual([['components.0', ['extra']]]);
  });

  it('an empty mixture', () => {
    const r = gaussianMixtureSchema.safeParse({ family: 'gaussian-mixture', components: [] });
    expect(issuePaths(r)).toEqual(['components']);
  });

  it('the registry union reports the same paths and builds valid specs', () => {
    expect(issuePaths(distributionSchema.safeParse({ family: 'gaussian', mean: 0, sd: -1 }))).toEqual(['sd']);
    expect(issuePaths(distributionSchema.safeParse({ family: 'uniform', lower: 3, upper: 1 }))).toEqual(['upper']);
    const spec = distributionSchema.parse({ family: 'gamma', shape: 3, scale: 5 });
    const d = createDistribution(spec);
    expect(d.family).toBe('gamma');
    expect(d.mean()).toBe(15);
  });
});

describe('the log-concavity flags hold as laws', () => {
  // Concavity checked by second differences of the log-density on random triples
  // (a law, no outside reference needed): in x for `logConcave`, and for the
  // density of u = log X, log f(e^u) + u, for `logConcaveInLog`. Families whose
  // flag is false must show a violation somewhere, so a flag set too
  // generously, or too cautiously, fails the test.
  const families: [string, Distribution, [number, number]][] = [
    ['gamma k=3', new Gamma(3, 5), [0.05, 80]],
    ['gamma k=0.5', new Gamma(0.5, 2), [0.01, 20]],
    ['log-normal', new LogNormal(1, 0.5), [0.05, 30]],
    ['uniform on [0.5, 4]', new Uniform(0.5, 4), [0.5, 4]],
    ['gaussian', new Gaussian(3, 2), [-5, 11]],
    ['mixture', new GaussianMixture([{ weight: 1, mean: -2, sd: 1 }, { weight: 2, mean: 3, sd: 1.5 }]), [-6, 8]],
  ];
  /** Largest second difference g(a) − 2g(m) + g(b) (with m the midpoint) over a fine sweep: > 0 breaks concavity. */
  const worstBend = (g: (t: number) => number, lo: number, hi: number): number => {
    let worst = -Infinity;
    const n = 400;
    for (let i = 1; i < n; i++) {
      const h = (hi - lo) / n;
      const t = lo + i * h;
      const v = g(t - h) - 2 * g(t) + g(t + h);
      if (Number.isFinite(v)) worst = Math.max(worst, v / Math.max(1, Math.abs(g(t))));
    }
    return worst;
  };
  it.each(families)('%s', (_name, d, [lo, hi]) => {
    const inX = worstBend((x) => d.logPdf(x), lo, hi);
    expect(inX <= 1e-9, `logConcave = ${d.logConcave}, worst bend in x ${inX}`).toBe(d.logConcave);
    if (lo > 0) {
      const inLog = worstBend((u) => d.logPdf(Math.exp(u)) + u, Math.log(lo), Math.log(hi));
      expect(inLog <= 1e-9, `logConcaveInLog = ${d.logConcaveInLog}, worst bend in log x ${inLog}`).toBe(d.logConcaveInLog);
    } else expect(d.logConcaveInLog).toBe(false);
  });
});
