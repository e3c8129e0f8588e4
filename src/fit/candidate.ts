/**
 * A candidate model: a loss family, which parameters are free, and their
 * bounds. It turns a vector of free parameters into an Observer.
 *
 * Parameters are named `noise.<condition>.<param>`, `loss.<param>`,
 * `motorSd`, `lapseRate` and `prior.<param>` (prior parameters are free only
 * when the model says the prior is not known).
 */
import { createDistribution, type DistributionSpec } from '../observer/distributions/registry.js';
import { createNoise, type NoiseSpec } from '../observer/noise/registry.js';
import { createLoss, lossFamily, type LossSpec } from '../observer/loss/registry.js';
import type { Observer, ResponseScale } from '../observer/observer.js';
import type { Bounded } from './transforms.js';

export interface FreeParameter extends Bounded {
  name: string;
}

export interface CandidateModel {
  name: string;
  lossFamily: string;
  /** Values of every parameter; free ones are overwritten by the fit. */
  base: Record<string, number>;
  free: FreeParameter[];
  prior: DistributionSpec;
  noise: NoiseSpec[];
  conditionNames: string[];
  scale: ResponseScale;
  motorAware: boolean;
}

export interface CandidateOptions {
  name: string;
  loss: LossSpec;
  prior: DistributionSpec;
  conditions: { name: string; noise: NoiseSpec }[];
  scale: ResponseScale;
  motorSd: number;
  lapseRate: number;
  motorAware?: boolean;
  /** Names of free parameters; default: the loss's own, every noise parameter, motorSd, lapseRate. */
  free?: string[];
  /** Overrides of default bounds by parameter name. */
  bounds?: Record<string, { lower: number; upper: number }>;
}

/** Default bounds, scaled to the response range where a parameter has stimulus units. */
function defaultBounds(name: string, range: number, logSpaceNoise: boolean): Bounded {
  const leaf = name.split('.').pop()!;
  switch (leaf) {
    case 'sd':
    case 'sd0':
      // Sensory noise below 1% of the response range is implausible for estimation
      // tasks, and the grids (which follow the noise) grow as range/sd.
      // Noise on log x is unitless (a fraction, roughly), whatever the response range.
      return logSpaceNoise ? { lower: 0.01, upper: 3, transform: 'log' } : { lower: range * 1e-2, upper: range / 2, transform: 'log' };
    case 'weber':
      return { lower: 0.01, upper: 1.5, transform: 'log' };
    case 'motorSd':
      return { lower: range * 2e-3, upper: range / 2, transform: 'log' };
    case 'lapseRate':
      return { lower: 1e-4, upper: 0.3, transform: 'logit' };
    case 'window':
    case 'width':
      return { lower: range * 1e-3, upper: range / 2, transform: 'log' };
    default:
      return { lower: 1e-3, upper: 1e3, transform: 'log' };
  }
}

export function defineCandidate(o: CandidateOptions): CandidateModel {
  const { family, ...lossParams } = o.loss as { family: string } & Record<string, number>;
  const fam = lossFamily(family);
  const range = o.scale.upper - o.scale.lower;
  const base: Record<string, number> = { motorSd: o.motorSd, lapseRate: o.lapseRate };
  for (const [k, v] of Object.entries(lossParams)) base[`loss.${k}`] = v;
  o.conditions.forEach((c) => {
    for (const [k, v] of Object.entries(c.noise)) if (k !== 'family') base[`noise.${c.name}.${k}`] = v as number;
  });
  const { family: _pf, ...priorParams } = o.prior as { family: string } & Record<string, unknown>;
  for (const [k, v] of Object.entries(priorParams)) if (typeof v === 'number') base[`prior.${k}`] = v;
  const freeNames =
    o.free ??
    [
      ...fam.parameters.map((p) => `loss.${p.name}`),
      ...o.conditions.flatMap((c) => Object.keys(c.noise).filter((k) => k !== 'family').map((k) => `noise.${c.name}.${k}`)),
      'motorSd',
      'lapseRate',
    ];
  const free: FreeParameter[] = freeNames.map((name) => {
    if (!(name in base)) throw new Error(`model '${o.name}': unknown parameter '${name}' (known: ${Object.keys(base).join(', ')})`);
    const lossParam = fam.parameters.find((p) => `loss.${p.name}` === name);
    const condition = name.startsWith('noise.') ? o.conditions.find((c) => name === `noise.${c.name}.${name.split('.').pop()}`) : undefined;
    let b: Bounded = defaultBounds(name, range, condition?.noise.family === 'log-gaussian');
    if (lossParam && !['window', 'width'].includes(lossParam.name)) b = { lower: lossParam.min, upper: lossParam.max, transform: lossParam.transform };
    const user = o.bounds?.[name];
    if (user) b = { ...b, lower: user.lower, upper: user.upper };
    return { name, ...b };
  });
  return {
    name: o.name,
    lossFamily: family,
    base,
    free,
    prior: o.prior,
    noise: o.conditions.map((c) => c.noise),
    conditionNames: o.conditions.map((c) => c.name),
    scale: o.scale,
    motorAware: o.motorAware ?? false,
  };
}

/** All parameter values of the model with the given free values filled in. */
export function parameterValues(model: CandidateModel, theta: readonly number[]): Record<string, number> {
  const values = { ...model.base };
  model.free.forEach((p, i) => (values[p.name] = theta[i]));
  return values;
}

export function observerFromValues(model: CandidateModel, values: Record<string, number>): Observer {
  const lossParams: Record<string, number> = { family: model.lossFamily } as unknown as Record<string, number>;
  const priorSpec: Record<string, unknown> = { ...model.prior };
  for (const [k, v] of Object.entries(values)) {
    if (k.startsWith('loss.')) lossParams[k.slice(5)] = v;
    else if (k.startsWith('prior.')) priorSpec[k.slice(6)] = v;
  }
  const noise = model.noise.map((spec, c) => {
    const s: Record<string, unknown> = { ...spec };
    for (const k of Object.keys(spec)) if (k !== 'family') s[k] = values[`noise.${model.conditionNames[c]}.${k}`];
    return createNoise(s as NoiseSpec);
  });
  return {
    prior: createDistribution(priorSpec as DistributionSpec),
    noise,
    loss: createLoss(lossParams as unknown as LossSpec),
    motorSd: values.motorSd,
    lapseRate: values.lapseRate,
    scale: model.scale,
    motorAware: model.motorAware,
  };
}

export function observerFor(model: CandidateModel, theta: readonly number[]): Observer {
  return observerFromValues(model, parameterValues(model, theta));
}
