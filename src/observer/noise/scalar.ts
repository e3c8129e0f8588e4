/**
 * Scalar (Weber) noise: m ~ N(x, (w·x)²), sd proportional to the magnitude.
 * In linear space this makes the Bayes estimate non-monotone in m near and
 * below zero: nothing downstream may assume monotonicity for this family.
 */
import { z } from 'zod';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import { asinhWarp, type SensoryNoise, type Warp, type WarpContext } from './types.js';

export const scalarNoiseSchema = z.strictObject({
  family: z.literal('scalar'),
  weber: z.number().positive().max(2).describe('Weber fraction w (sd = w·x), in (0, 2]'),
});
export type ScalarNoiseSpec = z.infer<typeof scalarNoiseSchema>;

export class ScalarNoise implements SensoryNoise {
  readonly family = 'scalar';
  readonly space = 'linear' as const;
  readonly needsPositiveStimulus = true;
  readonly shiftInvariant = false;
  constructor(readonly weber: number) {}
  stimulusAt(m: number): number {
    return m;
  }
  center(x: number): number {
    return x;
  }
  sdAt(x: number): number {
    // A stimulus at exactly 0 would have no noise at all; keep the density defined.
    return Math.max(this.weber * Math.abs(x), 1e-300);
  }
  sample(x: number, rand: RandomStream): number {
    return x + this.sdAt(x) * drawStandardNormal(rand);
  }
  stimulusWarp(ctx: WarpContext): Warp {
    // sd grows like w·x, so u = asinh(x/floor)/w has unit noise sd for x ≫ floor.
    return asinhWarp(ctx.floor, this.weber);
  }
  measurementWarp(ctx: WarpContext): Warp {
    return asinhWarp(ctx.floor, this.weber);
  }
}

export const scalarNoiseFamily = {
  name: 'scalar' as const,
  summary: 'Weber-law noise: sd = w·x (positive stimuli)',
  schema: scalarNoiseSchema,
  create: (s: ScalarNoiseSpec): SensoryNoise => new ScalarNoise(s.weber),
};
