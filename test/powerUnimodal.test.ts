/**
 * Power loss with p < 1 on log-concave posteriors: the estimator skips the
 * global scan and follows the one sign change of the expected loss's
 * derivative from the curve's hint (src/observer/loss/power.ts,
 * unimodalEstimate). Two checks:
 *  - the law it rests on (Ibragimov, Theory Probab. Appl. 1:255, 1956: a
 *    log-concave density convolved with any unimodal function is unimodal),
 *    as a property: h(c) = E|c − x|^p, computed by an independent quadrature
 *    of the exact posterior (gamma, Gaussian or uniform prior × Gaussian
 *    likelihood), has a single local minimum;
 *  - the fast path returns the scan's global minimum, on the same posteriors
 *    with the log-concave flag hidden so the scan runs.
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import gammaDist from '@stdlib/stats-base-dists-gamma';
import normal from '@stdlib/stats-base-dists-normal';
import { Gamma } from '../src/observer/distributions/gamma.js';
import { Gaussian } from '../src/observer/distributions/gaussian.js';
import { Uniform } from '../src/observer/distributions/uniform.js';
import type { Distribution } from '../src/observer/distributions/types.js';
import { ConstantNoise } from '../src/observer/noise/constant.js';
import { powerLoss } from '../src/observer/loss/power.js';
import { buildPosteriorGrid, measurementRange } from '../src/observer/gridFactory.js';

const FC = { seed: 20261202 };

/** ∫_0^L t^p g(t) dt with t = s², so the integrand 2 s^(2p+1) g(s²) is smooth; composite 8-point Gauss–Legendre (A&S table 25.4). */
const GL8 = [
  [0.1834346424956498, 0.362683783378362],
  [0.525532409916329, 0.3137066458778873],
  [0.7966664774136267, 0.2223810344533745],
  [0.9602898564975363, 0.1012285362903763],
];
function powerMoment(g: (t: number) => number, p: number, L: number, panels = 200): number {
  const S = Math.sqrt(L);
  const w = S / panels;
  let sum = 0;
  for (let k = 0; k < panels; k++) {
    const mid = (k + 0.5) * w;
    for (const [x, wt] of GL8) {
      for (const s of [mid - 0.5 * w * x, mid + 0.5 * w * x]) sum += 0.5 * w * wt * 2 * s ** (2 * p + 1) * g(s * s);
    }
  }
  return sum;
}

/** Local minima of h over cs beyond the first: after falling then rising, any fall again. */
function extraMinima(h: (c: number) => number, cs: number[]): number {
  const hs = cs.map(h);
  let turns = 0;
  let falling = true;
  for (let i = 1; i < hs.length; i++) {
    const d = hs[i] - hs[i - 1];
    if (Math.abs(d) <= 1e-12 * Math.abs(hs[i])) continue;
    if (falling && d > 0) falling = false;
    else if (!falling && d < 0) {
      turns++;
      falling = true;
    }
  }
  return turns;
}

describe('power loss, p < 1, log-concave posterior', () => {
  it('the expected loss has a single local minimum (Ibragimov 1956; property, independent quadrature)', () => {
    fc.assert(
      fc.property(
        fc.constantFrom('gamma', 'gaussian', 'uniform'),
        fc.double({ min: 0.2, max: 0.95, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: -2, max: 2, noNaN: true }),
        (kind, p, r1, r2, zm) => {
          const sd = 0.5 + 3 * r2;
          // Exact unnormalised posterior density (prior from @stdlib or written out, Gaussian likelihood).
          const shape = 1 + 4 * r1;
          const scale = 2;
          const lo = kind === 'uniform' ? 1 : kind === 'gamma' ? 0 : -Infinity;
          const hi = kind === 'uniform' ? 4 + 6 * r1 : Infinity;
          const prior = (x: number) =>
            kind === 'gamma' ? (x > 0 ? gammaDist.pdf(x, shape, 1 / scale) : 0) : kind === 'gaussian' ? normal.pdf(x, 3, 1 + 2 * r1) : x >= lo && x <= hi ? 1 : 0;
          const centre = kind === 'gamma' ? shape * scale : kind === 'gaussian' ? 3 : 0.5 * (lo + hi);
          const m = centre + zm * sd;
          const f = (x: number) => prior(x) * normal.pdf(m, x, sd);
          const a = Math.max(lo, Math.min(centre, m) - 12 * sd - 30);
          const b = Math.min(hi, Math.max(centre, m) + 12 * sd + 30);
          const h = (c: number) => powerMoment((t) => f(c - t), p, c - a) + powerMoment((t) => f(c + t), p, b - c);
          // c over where the posterior has its mass.
          const cs = Array.from({ length: 121 }, (_, i) => Math.max(lo, m - 4 * sd) + ((Math.min(hi, m + 4 * sd) - Math.max(lo, m - 4 * sd)) * i) / 120);
          expect(extraMinima(h, cs)).toBe(0);
        },
      ),
      { ...FC, numRuns: 30 },
    );
  });

  it('control: a two-humped (not log-concave) posterior has two minima, which the check sees', () => {
    const f = (x: number) => 0.5 * normal.pdf(x, -3, 0.6) + 0.5 * normal.pdf(x, 3, 0.6);
    const h = (c: number) => powerMoment((t) => f(c - t), 0.5, c + 20) + powerMoment((t) => f(c + t), 0.5, 20 - c);
    expect(extraMinima(h, Array.from({ length: 121 }, (_, i) => -6 + (12 * i) / 120))).toBe(1);
  });

  /** The same prior without its log-concave flag: the estimator then scans every node. */
  const hidden = (prior: Distribution): Distribution => Object.create(prior, { logConcave: { value: false } }) as Distribution;
  const cases: [string, Distribution, number][] = [
    ['gamma(1.5, 2)', new Gamma(1.5, 2), 1.2],
    ['gamma(4, 3)', new Gamma(4, 3), 2],
    ['gaussian(0, 2)', new Gaussian(0, 2), 1],
    ['uniform(2, 9)', new Uniform(2, 9), 0.8],
  ];
  it.each(cases)('%s: the root from a hint equals the scan’s global minimum, p = 0.3, 0.6, 0.9', (_name, prior, sd) => {
    const noise = new ConstantNoise(sd);
    const xLo = prior.quantile(0.01);
    const xHi = prior.quantile(0.99);
    const fast = buildPosteriorGrid(prior, noise, measurementRange(noise, xLo, xHi)).grid;
    const scan = buildPosteriorGrid(hidden(prior), noise, measurementRange(noise, xLo, xHi)).grid;
    expect(fast.logConcave).toBe(true);
    expect(scan.logConcave).toBe(false);
    let worst = 0;
    for (const p of [0.3, 0.6, 0.9]) {
      const loss = powerLoss(p);
      let previous = NaN;
      for (let i = 0; i <= 12; i++) {
        const m = xLo - 2 * sd + ((xHi - xLo + 4 * sd) * i) / 12;
        fast.setMeasurement(m);
        scan.setMeasurement(m);
        // Hints as the curve gives them: the previous estimate (a poor one, a measurement apart), then none.
        const a = loss.estimate(fast, previous);
        const b = loss.estimate(scan, NaN);
        const c = loss.estimate(fast, NaN);
        previous = a;
        let v = 0;
        const mean = fast.mean();
        for (let j = fast.first; j <= fast.last; j++) v += fast.mass[j] * (fast.x[j] - mean) ** 2;
        worst = Math.max(worst, Math.abs(a - b) / Math.sqrt(v), Math.abs(c - b) / Math.sqrt(v));
      }
    }
    expect(worst).toBeLessThanOrEqual(1e-7);
  });
});
