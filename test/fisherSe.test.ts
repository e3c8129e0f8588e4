/**
 * Fisher-information standard errors against the spread of repeated fits:
 * asymptotically the ML estimate has covariance I⁻¹/n (Lehmann & Casella
 * 1998, Theory of Point Estimation, §6.3). A well-identified, fast model: a
 * Gaussian prior with constant noise (closed-form likelihood), squared loss,
 * free sensory and motor noise, 400 trials, 200 synthetic datasets.
 */
import { describe, expect, it } from 'vitest';
import { defineCandidate, observerFromValues } from '../src/fit/candidate.js';
import { fitModel } from '../src/fit/fitModel.js';
import { stimulusNodes } from '../src/design/expectationGrid.js';
import { generatingGrid } from '../src/design/distinguishability.js';
import { fisherInformation } from '../src/design/fisherInformation.js';
import { Gaussian } from '../src/observer/distributions/gaussian.js';
import { simulateResponses } from '../src/observer/sampler.js';
import { streamFromKey } from '../src/numerics/rng.js';

describe('predicted standard errors', () => {
  it('agree with the spread of 200 fitted estimates within 25%', () => {
    const model = defineCandidate({
      name: 'squared',
      loss: { family: 'squared' },
      prior: { family: 'gaussian', mean: 0, sd: 8 },
      conditions: [{ name: 'c', noise: { family: 'constant', sd: 4 } }],
      scale: { lower: -60, upper: 60, ends: 'censor' },
      motorSd: 4,
      lapseRate: 0.02,
      free: ['noise.c.sd', 'motorSd'],
    });
    const truth = { ...model.base };
    const stimulus = new Gaussian(0, 12);
    const nodes = stimulusNodes(stimulus, 1, 24);
    const fisher = fisherInformation(generatingGrid(model, truth, nodes), nodes);
    const n = 400;
    const predicted = fisher.perTrialFreeSe.map((s) => s! / Math.sqrt(n));
    const obs = observerFromValues(model, truth);
    const estimates: number[][] = [];
    for (let rep = 0; rep < 200; rep++) {
      const rand = streamFromKey(`fisherSe/${rep}`);
      const x = Float64Array.from({ length: n }, () => stimulus.sample(rand));
      const data = simulateResponses(obs, x, new Int32Array(n), rand);
      const fit = fitModel(model, data, { starts: 2, skipUncertainty: true });
      expect(fit.status).toBe('ok');
      estimates.push(fit.parameters.map((p) => p.free));
    }
    const spread = predicted.map((_, j) => {
      const v = estimates.map((e) => e[j]);
      const m = v.reduce((a, b) => a + b, 0) / v.length;
      return Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1));
    });
    if (process.env.LP_DEBUG) console.log({ spread, predicted, corr: fisher.correlation });
    for (let j = 0; j < predicted.length; j++) expect(Math.abs(spread[j] / predicted[j] - 1)).toBeLessThan(0.25);
    expect(fisher.nearSingular).toBe(false);
  });
});

describe('near-singular information', () => {
  it('is flagged when two parameters move the responses in the same way', () => {
    // With a Gaussian prior and constant noise, the asymmetric-linear level and the prior mean both only
    // shift the estimate line x̂ = a·m + b (Gelman et al., BDA ch. 2; Berger 1985 §4.4.2): one direction is flat.
    const model = defineCandidate({
      name: 'shifted',
      loss: { family: 'asymmetric-linear', level: 0.7 },
      prior: { family: 'gaussian', mean: 10, sd: 8 },
      conditions: [{ name: 'c', noise: { family: 'constant', sd: 4 } }],
      scale: { lower: -40, upper: 60, ends: 'censor' },
      motorSd: 1,
      lapseRate: 0.02,
      free: ['loss.level', 'prior.mean', 'noise.c.sd', 'motorSd'],
      bounds: { 'prior.mean': { lower: 1, upper: 30 } },
    });
    const nodes = stimulusNodes(new Gaussian(10, 8), 1, 16);
    const f = fisherInformation(generatingGrid(model, model.base, nodes), nodes);
    expect(f.nearSingular).toBe(true);
    expect(Math.abs(f.correlation![0][1]!)).toBeGreaterThan(0.999);
  });
});
