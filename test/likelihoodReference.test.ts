/**
 * The project's log-likelihood (src/observer/responseDensity.ts) against an
 * independent reference computation of the same model
 * (test/helpers/referenceLikelihood.ts: pointwise x̂ on a fresh fine grid per
 * measurement, adaptive Simpson over m split at jumps and kernel peaks).
 *
 * Each configuration simulates a 300-trial dataset with the project's sampler
 * and a fixed seed, and requires |project − reference| < 0.05 log-likelihood
 * units. The matrix covers every loss family, the four noise families, wide
 * stimulus ranges, lapses, censored and open scales, and the three traps:
 *   (1) motor noise small against slope(x̂)·σ_sensory, where a fixed
 *       Gauss–Hermite rule over m fails (demonstrated below with 20 nodes);
 *   (2) scalar noise over two to three decades of stimuli, where grids uniform
 *       in x are too coarse at small x;
 *   (3) estimate curves that jump (bimodal mixture priors under hit-or-miss,
 *       inverted-Gaussian and p < 1 power losses), where interpolating across
 *       the jump puts probability into the gap (demonstrated below: bridging the
 *       jump of the hit-or-miss curve costs several log-likelihood units).
 * The reference itself is checked against closed forms first.
 */
import { describe, expect, it } from 'vitest';
import { createDistribution, type DistributionSpec } from '../src/observer/distributions/registry.js';
import { createNoise, type NoiseSpec } from '../src/observer/noise/registry.js';
import { createLoss, type LossSpec } from '../src/observer/loss/registry.js';
import type { Dataset, Observer, ResponseScale } from '../src/observer/observer.js';
import { simulateResponses } from '../src/observer/sampler.js';
import { logLikelihood } from '../src/observer/responseDensity.js';
import { streamFromKey } from '../src/numerics/rng.js';
import { gaussHermite } from '../src/numerics/gaussRules.js';
import { Phi, referenceEstimate, referenceLogLikelihood, ReferenceCondition } from './helpers/referenceLikelihood.js';

interface Config {
  name: string;
  prior: DistributionSpec;
  noise: NoiseSpec[];
  loss: LossSpec;
  motorSd: number;
  lapse: number;
  scale: ResponseScale;
  motorAware?: boolean;
  /** Stimuli uniform on [lo, hi], or log-uniform when log is set. */
  stimuli: { lo: number; hi: number; log?: boolean };
  trials?: number;
}

const TRIALS = 300;
const TOL = 0.05;

function observerOf(c: Config): Observer {
  return {
    prior: createDistribution(c.prior),
    noise: c.noise.map(createNoise),
    loss: createLoss(c.loss),
    motorSd: c.motorSd,
    lapseRate: c.lapse,
    scale: c.scale,
    motorAware: c.motorAware ?? false,
  };
}

function datasetOf(c: Config, obs: Observer): Dataset {
  const n = c.trials ?? TRIALS;
  const rs = streamFromKey(`likelihood-reference:${c.name}:stimuli`);
  const stimulus = new Float64Array(n);
  const condition = new Int32Array(n);
  const { lo, hi, log } = c.stimuli;
  for (let t = 0; t < n; t++) {
    const u = rs();
    stimulus[t] = log ? Math.exp(Math.log(lo) + u * (Math.log(hi) - Math.log(lo))) : lo + u * (hi - lo);
    condition[t] = t % c.noise.length;
  }
  return simulateResponses(obs, stimulus, condition, streamFromKey(`likelihood-reference:${c.name}:responses`));
}

const open = (lower: number, upper: number): ResponseScale => ({ lower, upper, ends: 'open' });
const censor = (lower: number, upper: number): ResponseScale => ({ lower, upper, ends: 'censor' });
const bimodal = (w1: number, m1: number, s1: number, w2: number, m2: number, s2: number): DistributionSpec => ({
  family: 'gaussian-mixture',
  components: [
    { weight: w1, mean: m1, sd: s1 },
    { weight: w2, mean: m2, sd: s2 },
  ],
});

/**
 * Trap 1 configuration, reused by the Gauss–Hermite demonstration: the slope of
 * x̂ is 0.6–0.9, so σ_m / (slope·σ_s) ≈ 0.07 (0.004 in the "tiny" case below).
 */
const TRAP1: Config = {
  name: 'trap 1: small motor noise, log-normal prior, constant noise, absolute loss',
  prior: { family: 'log-normal', mu: Math.log(8), sigma: 0.6 },
  noise: [{ family: 'constant', sd: 1 }],
  loss: { family: 'absolute' },
  motorSd: 0.05,
  lapse: 0,
  scale: open(-20, 80),
  stimuli: { lo: 1, hi: 30 },
};

const CONFIGS: Config[] = [
  {
    name: 'gaussian prior, constant noise, squared loss (closed form in the project)',
    prior: { family: 'gaussian', mean: 0, sd: 4 },
    noise: [{ family: 'constant', sd: 1 }],
    loss: { family: 'squared' },
    motorSd: 0.4,
    lapse: 0.02,
    scale: open(-30, 30),
    stimuli: { lo: -12, hi: 12 },
  },
  TRAP1,
  {
    name: 'trap 1: tiny motor noise (0.005), gamma prior, constant noise, squared loss',
    prior: { family: 'gamma', shape: 3, scale: 3 },
    noise: [{ family: 'constant', sd: 1.5 }],
    loss: { family: 'squared' },
    motorSd: 0.005,
    lapse: 0.01,
    scale: open(-20, 80),
    stimuli: { lo: 0.5, hi: 30 },
  },
  {
    name: 'trap 2: scalar noise over three decades, log-normal prior, squared loss',
    prior: { family: 'log-normal', mu: Math.log(10), sigma: 1.2 },
    noise: [{ family: 'scalar', weber: 0.12 }],
    loss: { family: 'squared' },
    motorSd: 0.03,
    lapse: 0.01,
    scale: open(0, 2000),
    stimuli: { lo: 0.3, hi: 300, log: true },
  },
  {
    name: 'trap 2: scalar noise over two decades, gamma prior, asymmetric-linear loss',
    prior: { family: 'gamma', shape: 2, scale: 5 },
    noise: [{ family: 'scalar', weber: 0.2 }],
    loss: { family: 'asymmetric-linear', level: 0.7 },
    motorSd: 0.05,
    lapse: 0.02,
    scale: open(0, 200),
    stimuli: { lo: 0.3, hi: 60, log: true },
  },
  {
    name: 'trap 3: bimodal prior, hit-or-miss loss (jumping estimate)',
    prior: bimodal(1, -4, 0.8, 1.2, 4, 0.8),
    noise: [{ family: 'constant', sd: 1.5 }],
    loss: { family: 'hit-or-miss', window: 0.4 },
    motorSd: 0.25,
    lapse: 0.02,
    scale: open(-15, 15),
    stimuli: { lo: -8, hi: 8 },
  },
  {
    name: 'trap 3 + 1: bimodal prior, inverted-gaussian loss, small motor noise',
    prior: bimodal(0.3, -3, 0.6, 0.7, 3.5, 0.6),
    noise: [{ family: 'constant', sd: 1.2 }],
    loss: { family: 'inverted-gaussian', width: 0.6 },
    motorSd: 0.08,
    lapse: 0.01,
    scale: open(-12, 12),
    stimuli: { lo: -7, hi: 7 },
  },
  {
    name: 'trap 3: bimodal prior, non-convex power loss p = 0.5',
    prior: bimodal(0.5, -3, 0.7, 0.5, 3.5, 0.9),
    noise: [{ family: 'constant', sd: 1.3 }],
    loss: { family: 'power', exponent: 0.5 },
    motorSd: 0.3,
    lapse: 0.02,
    scale: open(-12, 12),
    stimuli: { lo: -7, hi: 7 },
  },
  {
    name: 'log-gaussian noise, log-normal prior, hit-or-miss loss, censored scale',
    prior: { family: 'log-normal', mu: 1.5, sigma: 0.7 },
    noise: [{ family: 'log-gaussian', sd: 0.25 }],
    loss: { family: 'hit-or-miss', window: 0.3 },
    motorSd: 0.2,
    lapse: 0.02,
    scale: censor(0, 12),
    stimuli: { lo: 1, hi: 25, log: true },
  },
  {
    name: 'log-gaussian noise, gamma prior, power loss p = 3',
    prior: { family: 'gamma', shape: 3, scale: 2 },
    noise: [{ family: 'log-gaussian', sd: 0.3 }],
    loss: { family: 'power', exponent: 3 },
    motorSd: 0.3,
    lapse: 0.02,
    scale: open(0, 100),
    stimuli: { lo: 0.5, hi: 30, log: true },
  },
  {
    name: 'log-gaussian noise, log-normal prior, squared loss (log-linear closed form)',
    prior: { family: 'log-normal', mu: 2, sigma: 0.8 },
    noise: [{ family: 'log-gaussian', sd: 0.2 }],
    loss: { family: 'squared' },
    motorSd: 0.1,
    lapse: 0,
    scale: open(0, 200),
    stimuli: { lo: 1, hi: 60, log: true },
  },
  {
    name: 'generalized noise, gaussian prior, asymmetric-linear loss',
    prior: { family: 'gaussian', mean: 10, sd: 8 },
    noise: [{ family: 'generalized', sd0: 0.6, weber: 0.1 }],
    loss: { family: 'asymmetric-linear', level: 0.75 },
    motorSd: 0.2,
    lapse: 0.03,
    scale: open(-40, 80),
    stimuli: { lo: -10, hi: 40 },
  },
  {
    name: 'generalized noise, log-normal prior, power loss p = 1.5',
    prior: { family: 'log-normal', mu: 2, sigma: 0.8 },
    noise: [{ family: 'generalized', sd0: 0.5, weber: 0.15 }],
    loss: { family: 'power', exponent: 1.5 },
    motorSd: 0.3,
    lapse: 0.01,
    scale: open(-10, 150),
    stimuli: { lo: 0.5, hi: 40 },
  },
  {
    name: 'uniform prior, constant noise, absolute loss, censored scale',
    prior: { family: 'uniform', lower: 0, upper: 10 },
    noise: [{ family: 'constant', sd: 1.2 }],
    loss: { family: 'absolute' },
    motorSd: 0.5,
    lapse: 0.03,
    scale: censor(0, 10),
    stimuli: { lo: 0.2, hi: 9.8 },
  },
  {
    name: 'two conditions (constant noise 0.5 and 2), gamma prior, squared loss',
    prior: { family: 'gamma', shape: 4, scale: 2.5 },
    noise: [
      { family: 'constant', sd: 0.5 },
      { family: 'constant', sd: 2 },
    ],
    loss: { family: 'squared' },
    motorSd: 0.3,
    lapse: 0.02,
    scale: open(-10, 50),
    stimuli: { lo: 1, hi: 25 },
  },
  {
    name: 'motor-aware observer, uniform prior, asymmetric-linear loss',
    prior: { family: 'uniform', lower: 0, upper: 10 },
    noise: [{ family: 'constant', sd: 1 }],
    loss: { family: 'asymmetric-linear', level: 0.75 },
    motorSd: 0.6,
    lapse: 0.02,
    motorAware: true,
    scale: open(-5, 15),
    stimuli: { lo: 0.2, hi: 9.8 },
  },
];

const byName = (part: string): Config => CONFIGS.find((c) => c.name.includes(part))!;

interface Row {
  name: string;
  project: number;
  reference: number;
  diff: number;
  seconds: number;
  estimates: number;
  jumps: number;
}
const rows: Row[] = [];

describe('log-likelihood agrees with an independent reference (300 trials, |Δ| < 0.05)', () => {
  it('reference x̂ reproduces closed forms (conjugate gaussian mean, log-normal median/mean, truncated-normal mean)', () => {
    const g = observerOf({ ...CONFIGS[0], loss: { family: 'squared' } });
    const [vp, vs] = [16, 1];
    for (const m of [-25, -3, 0, 2.5, 14]) expect(Math.abs(referenceEstimate(g, g.noise[0], m) - (vp * m) / (vp + vs))).toBeLessThan(1e-9);
    const ln = observerOf({ ...byName('log-linear closed form'), loss: { family: 'absolute' } });
    const ln2 = observerOf({ ...byName('log-linear closed form'), loss: { family: 'squared' } });
    const [lp, ls] = [0.64, 0.04];
    for (const m of [-1, 1.5, 4]) {
      const mu = (lp * m + ls * 2) / (lp + ls);
      const s2 = (lp * ls) / (lp + ls);
      expect(Math.abs(referenceEstimate(ln, ln.noise[0], m) / Math.exp(mu) - 1)).toBeLessThan(1e-9);
      expect(Math.abs(referenceEstimate(ln2, ln2.noise[0], m) / Math.exp(mu + s2 / 2) - 1)).toBeLessThan(1e-9);
    }
    // Uniform prior U(0, 10), noise sd 1.2: posterior N(m, 1.2²) truncated to [0, 10],
    // mean m + σ(φ(a) − φ(b))/(Φ(b) − Φ(a)) (Johnson, Kotz & Balakrishnan vol. 1, §13.10).
    const u = observerOf({ ...byName('uniform prior'), loss: { family: 'squared' } });
    const phi = (z: number) => Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);
    for (const m of [-2, 0.5, 5, 11]) {
      const a = (0 - m) / 1.2;
      const b = (10 - m) / 1.2;
      const mean = m + (1.2 * (phi(a) - phi(b))) / (Phi(b) - Phi(a));
      expect(Math.abs(referenceEstimate(u, u.noise[0], m) - mean)).toBeLessThan(1e-7);
    }
  });

  it('reference response density integrates to one and matches the Gaussian closed form', () => {
    const c = CONFIGS[0];
    const obs = observerOf(c);
    const ref = new ReferenceCondition(obs, obs.noise[0], -12, 12);
    // Closed form: x̂ = 16/17·m, so r ~ N(16/17·x, (16/17)² + 0.4²).
    const k = 16 / 17;
    const sd = Math.sqrt(k * k + 0.16);
    for (const [x, r] of [
      [-8, -7.1],
      [0, 0.3],
      [5, 6.9],
    ]) {
      const exact = Math.exp(-0.5 * ((r - k * x) / sd) ** 2) / (sd * Math.sqrt(2 * Math.PI));
      expect(Math.abs(ref.integrate(x, r, 0) / exact - 1)).toBeLessThan(1e-7);
    }
  });

  for (const c of CONFIGS) {
    it(c.name, () => {
      const obs = observerOf(c);
      const data = datasetOf(c, obs);
      const t0 = performance.now();
      const project = logLikelihood(obs, data);
      const ref = referenceLogLikelihood(obs, data);
      const seconds = (performance.now() - t0) / 1000;
      const estimates = ref.conditions.reduce((s, q) => s + (q ? q.stats.estimates : 0), 0);
      const jumps = ref.conditions.reduce((s, q) => s + (q ? q.jumps.length : 0), 0);
      rows.push({ name: c.name, project, reference: ref.logLik, diff: project - ref.logLik, seconds, estimates, jumps });
      expect(Number.isFinite(project)).toBe(true);
      expect(Math.abs(project - ref.logLik)).toBeLessThan(TOL);
    });
  }

  it('trap 1 is real: a 20-node Gauss–Hermite rule over m is off by more than one log-likelihood unit', () => {
    const obs = observerOf(TRAP1);
    const data = datasetOf(TRAP1, obs);
    const ref = referenceLogLikelihood(obs, data);
    const cond = ref.conditions[0];
    const gh = gaussHermite(20);
    const noise = obs.noise[0];
    const sm = obs.motorSd;
    let ll = 0;
    for (let t = 0; t < data.stimulus.length; t++) {
      const x = data.stimulus[t];
      const r = data.response[t];
      const c = noise.center(x);
      const sd = noise.sdAt(x);
      let p = 0;
      for (let k = 0; k < gh.nodes.length; k++) {
        const xh = cond.xhat(c + Math.SQRT2 * sd * gh.nodes[k]);
        const z = (r - xh) / sm;
        p += (gh.weights[k] / Math.sqrt(Math.PI)) * (Math.exp(-0.5 * z * z) / (sm * Math.sqrt(2 * Math.PI)));
      }
      p = (1 - obs.lapseRate) * p + (obs.lapseRate > 0 ? obs.lapseRate / (obs.scale.upper - obs.scale.lower) : 0);
      ll += Math.log(p > 1e-300 ? p : 1e-300);
    }
    console.log(`trap 1, 20-node Gauss–Hermite over m: ${ll.toFixed(3)} vs reference ${ref.logLik.toFixed(3)} (off by ${(ll - ref.logLik).toFixed(3)})`);
    expect(Math.abs(ll - ref.logLik)).toBeGreaterThan(1);
  });

  it('trap 3 is real: x̂ interpolated across the jump (instead of split there) is off by more than one unit', () => {
    // Both curves interpolate the reference's pointwise x̂ linearly between its
    // lattice nodes (¼ sensory sd apart); one bridges the jump, one splits there
    // using the one-sided limits. The m-integral is a fine trapezoid for both.
    const c = byName('hit-or-miss loss (jumping');
    const obs = observerOf(c);
    const data = datasetOf(c, obs);
    const ref = referenceLogLikelihood(obs, data);
    const cond = ref.conditions[0];
    expect(cond.jumps.length).toBe(1);
    const J = cond.jumps[0];
    const { m, xhat } = cond.lattice();
    const step = m[1] - m[0];
    const curve = (u: number, split: boolean): number => {
      const i = Math.max(0, Math.min(m.length - 2, Math.floor((u - m[0]) / step)));
      const [a, b] = [m[i], m[i + 1]];
      if (split && J.m > a && J.m < b) {
        return u < J.m ? xhat[i] + ((J.left - xhat[i]) * (u - a)) / (J.m - a) : J.right + ((xhat[i + 1] - J.right) * (u - J.m)) / (b - J.m);
      }
      return xhat[i] + ((xhat[i + 1] - xhat[i]) * (u - a)) / (b - a);
    };
    const noise = obs.noise[0];
    const sm = obs.motorSd;
    const lapse = obs.lapseRate / (obs.scale.upper - obs.scale.lower);
    const ll = (split: boolean): number => {
      let s = 0;
      for (let t = 0; t < data.stimulus.length; t++) {
        const x = data.stimulus[t];
        const r = data.response[t];
        const sd = noise.sdAt(x);
        const N = 20000;
        const lo = noise.center(x) - 9 * sd;
        const h = (18 * sd) / N;
        let p = 0;
        for (let k = 0; k <= N; k++) {
          const u = lo + k * h;
          const z = (r - curve(u, split)) / sm;
          const zm = (u - noise.center(x)) / sd;
          p += (k === 0 || k === N ? 0.5 : 1) * Math.exp(-0.5 * (z * z + zm * zm));
        }
        s += Math.log((1 - obs.lapseRate) * ((p * h) / (2 * Math.PI * sm * sd)) + lapse);
      }
      return s;
    };
    const bridged = ll(false);
    const split = ll(true);
    console.log(
      `trap 3: linear x̂ bridging the jump at m = ${J.m.toFixed(4)} (${J.left.toFixed(3)} → ${J.right.toFixed(3)}): ${bridged.toFixed(3)}; ` +
        `split there: ${split.toFixed(3)}; reference ${ref.logLik.toFixed(3)}`,
    );
    expect(Math.abs(split - ref.logLik)).toBeLessThan(0.05);
    expect(Math.abs(bridged - ref.logLik)).toBeGreaterThan(1);
  });

  it('summary', () => {
    const lines = rows.map(
      (r) =>
        `${r.diff >= 0 ? ' ' : ''}${r.diff.toExponential(2)}  project ${r.project.toFixed(4)}  reference ${r.reference.toFixed(4)}  ${r.seconds.toFixed(1)} s  x̂ evals ${r.estimates}  jumps ${r.jumps}  ${r.name}`,
    );
    console.log(['Δ = project − reference:', ...lines].join('\n'));
  });
});
