/**
 * Shared fixtures for the fitting tests (test/fit*.test.ts): candidate models
 * on one response scale, seeded stimuli drawn from the prior, simulated
 * datasets at known ("true") parameter values, and hand-made FitResults for
 * the comparison logic.
 *
 * Nothing here computes a reference value: the numbers the tests check come
 * from the sources named beside each check.
 */
import { defineCandidate, observerFromValues, type CandidateModel, type CandidateOptions } from '../../src/fit/candidate.js';
import type { FitResult } from '../../src/fit/fitModel.js';
import { negLogLikObjective, freeVector } from '../../src/fit/fitModel.js';
import { aic, aicc, bic } from '../../src/fit/criteria.js';
import { createDistribution, type DistributionSpec } from '../../src/observer/distributions/registry.js';
import type { LossSpec } from '../../src/observer/loss/registry.js';
import type { NoiseSpec } from '../../src/observer/noise/registry.js';
import type { Dataset, ResponseScale } from '../../src/observer/observer.js';
import { simulateResponses } from '../../src/observer/sampler.js';
import { responseModels } from '../../src/observer/responseDensity.js';
import { streamFromKey } from '../../src/numerics/rng.js';

/** Response scale 0–120, censored at both ends (responses beyond an end are recorded at it). */
export const SCALE: ResponseScale = { lower: 0, upper: 120, ends: 'censor' };

/** Right-skewed magnitude prior: gamma, shape 2.5, scale 8 (mean 20, mode 12). */
export const GAMMA_PRIOR: DistributionSpec = { family: 'gamma', shape: 2.5, scale: 8 };

export const MOTOR_SD = 1.5;
export const LAPSE_RATE = 0.02;

export interface ModelSpec {
  name?: string;
  loss: LossSpec;
  prior?: DistributionSpec;
  noise: NoiseSpec;
  motorSd?: number;
  lapseRate?: number;
  free?: string[];
  bounds?: CandidateOptions['bounds'];
}

/** One-condition candidate (condition name 'c'); the spec's values become the model's base (= true) values. */
export function model(spec: ModelSpec): CandidateModel {
  return defineCandidate({
    name: spec.name ?? spec.loss.family,
    loss: spec.loss,
    prior: spec.prior ?? GAMMA_PRIOR,
    conditions: [{ name: 'c', noise: spec.noise }],
    scale: SCALE,
    motorSd: spec.motorSd ?? MOTOR_SD,
    lapseRate: spec.lapseRate ?? LAPSE_RATE,
    free: spec.free,
    bounds: spec.bounds,
  });
}

/** n stimuli drawn from the prior with a stream keyed by `key`; draws below `minStimulus` are redrawn. */
export function stimuliFromPrior(prior: DistributionSpec, n: number, key: string, minStimulus = -Infinity): Float64Array {
  const dist = createDistribution(prior);
  const rand = streamFromKey(`stimuli/${key}`);
  const out = new Float64Array(n);
  for (let i = 0; i < n; ) {
    const x = dist.sample(rand);
    if (x >= minStimulus) out[i++] = x;
  }
  return out;
}

/**
 * A dataset simulated by the sampler from `generator` at its base values
 * (every parameter, free or not), stimuli from the generator's prior
 * (optionally only those ≥ minStimulus).
 */
export function simulate(generator: CandidateModel, n: number, key: string, minStimulus = -Infinity): Dataset {
  const stimulus = stimuliFromPrior(generator.prior, n, key, minStimulus);
  const condition = new Int32Array(n);
  const obs = observerFromValues(generator, generator.base);
  return simulateResponses(obs, stimulus, condition, streamFromKey(`responses/${key}`));
}

/** Log-likelihood of `m` on `data` at the given parameter values (through the fit's own objective). */
export function logLikAt(m: CandidateModel, data: Dataset, values: Record<string, number>): number {
  return -negLogLikObjective(m, data, [])(freeVector(m, values));
}

/**
 * Trials whose recorded response has zero probability (density or end mass)
 * under the model that simulated them. A sampler consistent with the response
 * density never produces one; each costs the floor, log 1e-300 = −690.8.
 */
export function impossibleTrials(generator: CandidateModel, data: Dataset): number[] {
  const models = responseModels(observerFromValues(generator, generator.base), data);
  const bad: number[] = [];
  for (let t = 0; t < data.stimulus.length; t++) {
    if (!(models[data.condition[t]].likelihood(data.stimulus[t], data.response[t]) > 1e-300)) bad.push(t);
  }
  return bad;
}

/** A hand-made successful FitResult with the given maximised log-likelihood, k and n. */
export function fakeFit(name: string, logLik: number, k: number, n: number, status: 'ok' | 'failed' = 'ok'): FitResult {
  const ok = status === 'ok';
  return {
    model: name,
    status,
    reason: ok ? 'converged' : 'no start reached a finite log-likelihood',
    logLikelihood: ok ? logLik : -Infinity,
    k,
    n,
    aic: ok ? aic(logLik, k) : Infinity,
    aicc: ok ? aicc(logLik, k, n) : Infinity,
    bic: ok ? bic(logLik, k, n) : Infinity,
    parameters: [],
    hessianRatio: NaN,
    flatDirection: false,
    starts: [],
    evaluations: 0,
  };
}

/** Wall-clock seconds since t0 (performance.now() value), for the runtime notes printed by the slow suites. */
export function seconds(t0: number): string {
  return ((performance.now() - t0) / 1000).toFixed(1);
}
