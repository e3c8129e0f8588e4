/**
 * The analytic preview (src/design/): KL divergences against Kullback's closed
 * form, the gaussian-control labels, and the predicted per-trial
 * log-likelihood ratio against simulation on the skewed demo.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { defineCandidate, observerFromValues } from '../src/fit/candidate.js';
import { expectationGrid, logDensityOn, stimulusNodes } from '../src/design/expectationGrid.js';
import { generatingGrid, minimumDivergence, pairLabel, ratioMoments, ZERO_DIVERGENCE } from '../src/design/distinguishability.js';
import { analyticPreview, designNodes, typicalValues } from '../src/design/analyticPreview.js';
import { pairwiseWin, penalty, TRIAL_GRID, trialsToReach } from '../src/design/predictedAccuracy.js';
import { Gaussian } from '../src/observer/distributions/gaussian.js';
import { createDistribution } from '../src/observer/distributions/registry.js';
import { simulateResponses } from '../src/observer/sampler.js';
import { conditionResponses } from '../src/design/expectationGrid.js';
import { streamFromKey } from '../src/numerics/rng.js';
import { loadStudy } from '../src/engine/resolve.js';
import { readScenario } from '../src/scenario/variants.js';
import { resolveStudy } from '../src/engine/resolve.js';
import { syntheticDataset } from '../src/engine/syntheticObserver.js';

/** KL(N(μ1, s1²) ‖ N(μ2, s2²)) = log(s2/s1) + (s1² + (μ1−μ2)²)/(2 s2²) − ½ (Kullback, Information Theory and Statistics, 1959). */
const klGauss = (m1: number, s1: number, m2: number, s2: number) => Math.log(s2 / s1) + (s1 * s1 + (m1 - m2) ** 2) / (2 * s2 * s2) - 0.5;

function linearObserver(sensorySd: number, motorSd: number, level?: number) {
  const model = defineCandidate({
    name: 'm',
    loss: level === undefined ? { family: 'squared' } : { family: 'asymmetric-linear', level },
    prior: { family: 'gaussian', mean: 2, sd: 6 },
    conditions: [{ name: 'c', noise: { family: 'constant', sd: sensorySd } }],
    scale: { lower: -60, upper: 60, ends: 'open' },
    motorSd,
    lapseRate: 0,
  });
  return observerFromValues(model, model.base);
}

describe('KL divergence per trial (expectation grid)', () => {
  it('matches the closed form for two Gaussian response distributions', () => {
    // Gaussian prior N(2, 36), constant noise: x̂ = a·m + b, so r | x ~ N(a x + b + shift, a²σs² + σm²) exactly
    // (Gelman et al., Bayesian Data Analysis, ch. 2, for a and b; Berger 1985 §4.4.2 for the quantile shift).
    const nodes = stimulusNodes(new Gaussian(1, 5), 1, 12);
    const P = linearObserver(3, 1.2);
    const Q = linearObserver(4, 0.8, 0.7);
    const grid = expectationGrid(P, nodes);
    const { mean } = ratioMoments(grid, logDensityOn(Q, grid, nodes));
    const moments = (sd: number, motor: number, level?: number) => {
      const vp = 36;
      const vs = sd * sd;
      const a = vp / (vp + vs);
      const post = Math.sqrt((vp * vs) / (vp + vs));
      const shift = level === undefined ? 0 : post * 0.5244005127080407; // Φ⁻¹(0.7) (from memory, standard normal tables)
      return (x: number) => ({ mean: a * x + (vs * 2) / (vp + vs) + shift, sd: Math.sqrt(a * a * vs + motor * motor) });
    };
    const p = moments(3, 1.2);
    const q = moments(4, 0.8, 0.7);
    const expected = nodes.reduce((acc, n) => acc + n.weight * klGauss(p(n.x).mean, p(n.x).sd, q(n.x).mean, q(n.x).sd), 0);
    expect(expected).toBeGreaterThan(0.05);
    expect(Math.abs(mean - expected)).toBeLessThan(1e-5 * expected);
  });

  it('is zero from a model to itself, never negative, and matches Kullback for random Gaussian pairs', () => {
    const nodes = stimulusNodes(new Gaussian(1, 5), 1, 8);
    fc.assert(
      fc.property(fc.double({ min: 1, max: 6, noNaN: true }), fc.double({ min: 0.5, max: 3, noNaN: true }), fc.double({ min: 1, max: 6, noNaN: true }), fc.double({ min: 0.5, max: 3, noNaN: true }), (s1, m1, s2, m2) => {
        const P = linearObserver(s1, m1);
        const Q = linearObserver(s2, m2);
        const grid = expectationGrid(P, nodes);
        expect(Math.abs(ratioMoments(grid, logDensityOn(P, grid, nodes)).mean)).toBeLessThan(1e-12);
        const kl = ratioMoments(grid, logDensityOn(Q, grid, nodes)).mean;
        const mom = (sd: number, motor: number) => {
          const a = 36 / (36 + sd * sd);
          return (x: number) => ({ mean: a * x + (sd * sd * 2) / (36 + sd * sd), sd: Math.sqrt(a * a * sd * sd + motor * motor) });
        };
        const p = mom(s1, m1);
        const q = mom(s2, m2);
        const exact = nodes.reduce((acc, n) => acc + n.weight * klGauss(p(n.x).mean, p(n.x).sd, q(n.x).mean, q(n.x).sd), 0);
        expect(kl).toBeGreaterThanOrEqual(-1e-12);
        expect(Math.abs(kl - exact)).toBeLessThan(1e-5 * Math.max(exact, 1e-3));
      }),
      { seed: 5150, numRuns: 12 },
    );
  });

  it('labels pairs from the two directions and the parameter counts', () => {
    expect(pairLabel(0, 0, 3, 3)).toBe('equivalent');
    expect(pairLabel(0, 0, 3, 4)).toBe('nested');
    expect(pairLabel(0, 0.2, 3, 4)).toBe('nested');
    expect(pairLabel(0.01, 0.2, 3, 3)).toBe('separable');
  });
});

describe('gaussian control design', () => {
  it('finds the symmetric losses equivalent, squared nested in power, and says the loss is not identifiable', () => {
    const s = readScenario('scenarios/gaussian-control.yaml');
    s.models.push({ name: 'power', loss: { family: 'power', exponent: 1.5 } } as (typeof s.models)[number]);
    const study = resolveStudy(s, 'gaussian-control + power');
    const t0 = Date.now();
    const a = analyticPreview(study.scenario, study.candidates, study.generating);
    expect(Date.now() - t0).toBeLessThan(20_000);
    const kl = (g: string, c: string) => a.divergence.kl[a.divergence.rows.indexOf(g)][a.divergence.columns.indexOf(c)]!;
    for (const [x, y] of [
      ['squared', 'absolute'],
      ['squared', 'hit-or-miss'],
      ['absolute', 'hit-or-miss'],
    ]) {
      expect(kl(x, y)).toBeLessThan(ZERO_DIVERGENCE);
      expect(kl(y, x)).toBeLessThan(ZERO_DIVERGENCE);
      expect(a.pairs.find((p) => p.a === x && p.b === y)!.label).toBe('equivalent');
    }
    expect(a.pairs.find((p) => p.a === 'squared' && p.b === 'power')!.label).toBe('nested');
    // The positive control stays separable from every symmetric loss.
    expect(kl('asymmetric', 'squared')).toBeGreaterThan(0.05);
    expect(a.statements.join(' ')).toMatch(/not identifiable/);
    // Equivalent rivals tie: the predicted accuracy of squared never reaches the target.
    expect(a.predicted.trialsNeeded.squared).toBeNull();
  });
});

describe('predicted per-trial log-likelihood ratio on the skewed demo', () => {
  it('agrees with the simulated mean difference within Monte Carlo error', () => {
    const study = loadStudy('scenarios/skewed-magnitudes.yaml');
    const s = study.scenario;
    const nodes = designNodes(s);
    const gen = study.candidates.find((c) => c.name === 'squared')!;
    const rival = study.candidates.find((c) => c.name === 'hit-or-miss')!;
    const g = generatingGrid(gen, typicalValues(s, gen), nodes);
    const d = minimumDivergence(g, rival, nodes);
    // Simulate fixed-seed trials from the generating observer and score both models on them.
    const n = 20000;
    const rand = streamFromKey('designPreview/llr');
    const stimulusDist = createDistribution(s.stimulus ?? s.prior);
    const stimulus = Float64Array.from({ length: n }, () => stimulusDist.sample(rand));
    const condition = new Int32Array(n);
    const P = observerFromValues(gen, g.values);
    const Q = observerFromValues(rival, { ...rival.base, ...d.closest });
    const data = simulateResponses(P, stimulus, condition, rand);
    const simNodes = [{ condition: 0, x: Math.min(...stimulus), weight: 0 }, { condition: 0, x: Math.max(...stimulus), weight: 0 }];
    const [rp] = conditionResponses(P, simNodes);
    const [rq] = conditionResponses(Q, simNodes);
    let sum = 0;
    let sum2 = 0;
    for (let t = 0; t < n; t++) {
      const v = Math.log(rp!.likelihood(stimulus[t], data.response[t])) - Math.log(rq!.likelihood(stimulus[t], data.response[t]));
      sum += v;
      sum2 += v * v;
    }
    const mean = sum / n;
    const sd = Math.sqrt(sum2 / n - mean * mean);
    if (process.env.LP_DEBUG) console.log({ mean, kl: d.kl, se: sd / Math.sqrt(n), v: sd * sd, pv: d.variance });
    // Within 3.5 Monte Carlo standard errors (plus a small allowance for the 16-node stimulus quadrature).
    expect(Math.abs(mean - d.kl)).toBeLessThan(3.5 * (sd / Math.sqrt(n)) + 0.02 * d.kl);
    // The variance feeding the normal approximation agrees too (sampling error of a variance ~ √(2/n) for near-normal d, looser for heavy tails).
    expect(Math.abs(sd * sd - d.variance) / d.variance).toBeLessThan(0.15);
  });
});

describe('predicted accuracy', () => {
  it('uses the named penalties and the chi-square law for exact nesting', () => {
    expect(penalty('bic', 3, 100)).toBeCloseTo(3 * Math.log(100), 12); // Schwarz (1978)
    expect(penalty('aic', 3, 100)).toBe(6); // Akaike (1974)
    expect(penalty('aicc', 3, 100)).toBeCloseTo(6 + 24 / 96, 12); // Hurvich & Tsai (1989)
    // Inner model generating, outer one reproduces it: P(χ²₁ < ln n). At n = e^3.841459 the 95% point of χ²₁ (3.841459, from memory, standard tables).
    const nested = { generating: 'a', candidate: 'b', kl: 0, variance: 0, closest: {}, evaluations: 0, converged: true };
    expect(pairwiseWin(nested, 3, 4, Math.exp(3.841459), 'bic')).toBeCloseTo(0.95, 5);
    expect(pairwiseWin(nested, 3, 3, 1000, 'bic')).toBe(0);
    // A separable pair: more trials, better odds.
    const sep = { ...nested, kl: 0.01, variance: 0.02 };
    expect(pairwiseWin(sep, 3, 3, 400, 'bic')).toBeGreaterThan(pairwiseWin(sep, 3, 3, 100, 'bic'));
    expect(trialsToReach(TRIAL_GRID.map((t) => ({ trials: t, p: t >= 300 ? 0.9 : 0.5 })), 0.8)).toBe(TRIAL_GRID.find((t) => t >= 300));
  });
});

describe('uneven trial split', () => {
  it('deals each block in the split proportions and weights the preview by them', () => {
    const s = readScenario('scenarios/skewed-magnitudes.yaml');
    s.conditions.push({ name: 'long-flash', noise: { family: 'constant', sd: 4 } });
    s.split = { 'brief-flash': 2, 'long-flash': 1 };
    s.trials = 90;
    const study = resolveStudy(s, 'split');
    const { full } = syntheticDataset(study, 'squared', 0);
    for (let b = 0; b < 30; b++) {
      const block = Array.from(full.condition.slice(3 * b, 3 * b + 3)).sort();
      expect(block).toEqual([0, 0, 1]);
    }
    const nodes = designNodes(study.scenario);
    const share = nodes.filter((n) => n.condition === 0).reduce((a, n) => a + n.weight, 0);
    expect(share).toBeCloseTo(2 / 3, 12);
  });
});

describe('predicted response moments', () => {
  it('match the conjugate Gaussian closed form', () => {
    // r | x ~ N(a x + b, a²σs² + σm²) with a = σp²/(σp²+σs²), b = σs²μp/(σp²+σs²) (Gelman et al., BDA ch. 2).
    const s = readScenario('scenarios/gaussian-control.yaml');
    s.response = { ...s.response, ends: 'open', lapseRate: 0 };
    s.generate.parameters = {};
    s.models = [{ name: 'squared', loss: { family: 'squared' }, free: ['noise.standard.sd', 'motorSd'] } as (typeof s.models)[number]];
    const study = resolveStudy(s, 'gaussian-control, open scale, no lapses');
    const a = analyticPreview(study.scenario, study.candidates, ['squared']);
    const slope = 64 / (64 + 16);
    for (const m of a.responseMoments) {
      expect(m.mean).toBeCloseTo(slope * m.stimulus, 6);
      expect(m.sd).toBeCloseTo(Math.sqrt(slope * slope * 16 + 1), 6);
    }
  });
});
