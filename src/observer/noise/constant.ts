/** Constant Gaussian noise: m ~ N(x, sd²), the same for every stimulus. */
import { z } from 'zod';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import { linearWarp, type SensoryNoise, type Warp } from './types.js';

export const constantNoiseSchema = z.strictObject({
  family: z.literal('constant'),
  sd: z.number().positive().describe('measurement standard deviation, > 0, in stimulus units'),
});
export type ConstantNoiseSpec = z.infer<typeof constantNoiseSchema>;

export class ConstantNoise implements SensoryNoise {
  readonly family = 'constant';
  readonly space = 'linear' as const;
  readonly needsPositiveStimulus = false;
  readonly shiftInvariant = true;
  constructor(readonly sd: number) {}
  stimulusAt(m: number): number {
    return m;
  }
  center(x: number): number {
    return x;
  }
  sdAt(): number {
    return this.sd;
  }
  sample(x: number, rand: RandomStream): number {
    return x + this.sd * drawStandardNormal(rand);
  }
  stimulusWarp(): Warp {
    return linearWarp(this.sd);
  }
  measurementWarp(): Warp {
    return linearWarp(this.sd);
  }
}

export const constantNoiseFamily = {
  name: 'constant' as const,
  summary: 'Gaussian measurement noise with one sd for every stimulus',
  schema: constantNoiseSchema,
  create: (s: ConstantNoiseSpec): SensoryNoise => new ConstantNoise(s.sd),
};
