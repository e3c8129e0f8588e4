/**
 * Gaussian distribution N(mean, sd²). Closed forms: Johnson, Kotz & Balakrishnan,
 * Continuous Univariate Distributions vol. 1, ch. 13.
 */
import { z } from 'zod';
import { normCdf, normLogPdf, normQuantile } from '../../numerics/special.js';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import type { Distribution } from './types.js';

export const gaussianSchema = z.strictObject({
  family: z.literal('gaussian'),
  mean: z.number().describe('centre of the distribution'),
  sd: z.number().positive().describe('standard deviation, > 0'),
});
export type GaussianSpec = z.infer<typeof gaussianSchema>;

export class Gaussian implements Distribution {
  readonly family = 'gaussian';
  readonly support = [-Infinity, Infinity] as const;
  readonly logConcave = true;
  /** The support includes x ≤ 0, where log X does not exist. */
  readonly logConcaveInLog = false;
  private readonly logSd: number;
  constructor(readonly mu: number, readonly sd: number) {
    this.logSd = Math.log(sd);
  }
  logPdf(x: number): number {
    return normLogPdf((x - this.mu) / this.sd) - this.logSd;
  }
  cdf(x: number): number {
    return normCdf((x - this.mu) / this.sd);
  }
  quantile(p: number): number {
    return this.mu + this.sd * normQuantile(p);
  }
  sample(rand: RandomStream): number {
    return this.mu + this.sd * drawStandardNormal(rand);
  }
  mean(): number {
    return this.mu;
  }
  featureScale(): number {
    return this.sd;
  }
}

export const gaussianFamily = {
  name: 'gaussian' as const,
  summary: 'normal distribution with a mean and a standard deviation',
  schema: gaussianSchema,
  create: (s: GaussianSpec): Distribution => new Gaussian(s.mean, s.sd),
};
