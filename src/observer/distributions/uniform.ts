/**
 * Continuous uniform distribution on [lower, upper]. With Gaussian noise the
 * posterior is a truncated normal (Johnson, Kotz & Balakrishnan vol. 1, ch. 13).
 */
import { z } from 'zod';
import type { RandomStream } from '../../numerics/rng.js';
import type { Distribution } from './types.js';

export const uniformSchema = z
  .strictObject({
    family: z.literal('uniform'),
    lower: z.number().describe('lower end'),
    upper: z.number().describe('upper end, > lower'),
  })
  .refine((s) => s.upper > s.lower, { message: 'upper must be greater than lower', path: ['upper'] });
export type UniformSpec = z.infer<typeof uniformSchema>;

export class Uniform implements Distribution {
  readonly family = 'uniform';
  readonly support: readonly [number, number];
  readonly logConcave = true;
  /** On a positive support log X has density ∝ e^u on an interval: log-linear. */
  readonly logConcaveInLog: boolean;
  private readonly logWidth: number;
  constructor(readonly lower: number, readonly upper: number) {
    this.support = [lower, upper];
    this.logWidth = Math.log(upper - lower);
    this.logConcaveInLog = lower >= 0;
  }
  logPdf(x: number): number {
    return x >= this.lower && x <= this.upper ? -this.logWidth : -Infinity;
  }
  cdf(x: number): number {
    if (x <= this.lower) return 0;
    if (x >= this.upper) return 1;
    return (x - this.lower) / (this.upper - this.lower);
  }
  quantile(p: number): number {
    return this.lower + p * (this.upper - this.lower);
  }
  sample(rand: RandomStream): number {
    return this.lower + rand() * (this.upper - this.lower);
  }
  mean(): number {
    return 0.5 * (this.lower + this.upper);
  }
  featureScale(): number {
    return this.upper - this.lower;
  }
}

export const uniformFamily = {
  name: 'uniform' as const,
  summary: 'flat between a lower and an upper end',
  schema: uniformSchema,
  create: (s: UniformSpec): Distribution => new Uniform(s.lower, s.upper),
};
