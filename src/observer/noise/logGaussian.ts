/**
 * Noise Gaussian in log space: the measurement is m = log x + ε, ε ~ N(0, sd²),
 * the usual model for magnitudes and durations. With a log-normal prior the
 * posterior over log x is Gaussian (conjugate in log space).
 */
import { z } from 'zod';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import { linearWarp, logWarp, type SensoryNoise, type Warp } from './types.js';

export const logGaussianNoiseSchema = z.strictObject({
  family: z.literal('log-gaussian'),
  sd: z.number().positive().max(5).describe('sd of the measurement of log x, in (0, 5]'),
});
export type LogGaussianNoiseSpec = z.infer<typeof logGaussianNoiseSchema>;

export class LogGaussianNoise implements SensoryNoise {
  readonly family = 'log-gaussian';
  readonly space = 'log' as const;
  readonly needsPositiveStimulus = true;
  readonly shiftInvariant = true;
  constructor(readonly sd: number) {}
  stimulusAt(m: number): number {
    return Math.exp(m);
  }
  center(x: number): number {
    return Math.log(x);
  }
  sdAt(): number {
    return this.sd;
  }
  sample(x: number, rand: RandomStream): number {
    return Math.log(x) + this.sd * drawStandardNormal(rand);
  }
  stimulusWarp(): Warp {
    return logWarp(this.sd);
  }
  measurementWarp(): Warp {
    return linearWarp(this.sd);
  }
}

export const logGaussianNoiseFamily = {
  name: 'log-gaussian' as const,
  summary: 'Gaussian noise on log x (magnitudes, durations)',
  schema: logGaussianNoiseSchema,
  create: (s: LogGaussianNoiseSpec): SensoryNoise => new LogGaussianNoise(s.sd),
};
