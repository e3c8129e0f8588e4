/**
 * Generalised Weber noise: m ~ N(x, σ₀² + w²x²), constant near zero and
 * proportional far out. The warp u = asinh(w·x/σ₀)/w has du/dx = 1/sd(x)
 * exactly, so grids uniform in u follow the noise everywhere.
 */
import { z } from 'zod';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import { asinhWarp, linearWarp, type SensoryNoise, type Warp } from './types.js';

export const generalizedNoiseSchema = z.strictObject({
  family: z.literal('generalized'),
  sd0: z.number().positive().describe('noise sd at zero magnitude σ₀, > 0'),
  weber: z.number().nonnegative().max(2).describe('Weber fraction w, in [0, 2]'),
});
export type GeneralizedNoiseSpec = z.infer<typeof generalizedNoiseSchema>;

export class GeneralizedNoise implements SensoryNoise {
  readonly family = 'generalized';
  readonly space = 'linear' as const;
  readonly needsPositiveStimulus = false;
  readonly shiftInvariant: boolean;
  private readonly var0: number;
  private readonly w2: number;
  constructor(readonly sd0: number, readonly weber: number) {
    this.var0 = sd0 * sd0;
    this.w2 = weber * weber;
    this.shiftInvariant = weber === 0;
  }
  stimulusAt(m: number): number {
    return m;
  }
  center(x: number): number {
    return x;
  }
  sdAt(x: number): number {
    return Math.sqrt(this.var0 + this.w2 * x * x);
  }
  sample(x: number, rand: RandomStream): number {
    return x + this.sdAt(x) * drawStandardNormal(rand);
  }
  private warp(): Warp {
    // For tiny w the asinh form loses digits; it tends to the linear warp anyway.
    return this.weber < 1e-9 ? linearWarp(this.sd0) : asinhWarp(this.sd0 / this.weber, this.weber);
  }
  stimulusWarp(): Warp {
    return this.warp();
  }
  measurementWarp(): Warp {
    return this.warp();
  }
}

export const generalizedNoiseFamily = {
  name: 'generalized' as const,
  summary: 'sd = √(σ₀² + w²x²): constant near zero, Weber-like for large magnitudes',
  schema: generalizedNoiseSchema,
  create: (s: GeneralizedNoiseSpec): SensoryNoise => new GeneralizedNoise(s.sd0, s.weber),
};
