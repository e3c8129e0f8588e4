/**
 * Log-normal distribution: log x ~ N(mu, sigma²). Mean e^(mu+sigma²/2), median e^mu,
 * mode e^(mu−sigma²): Johnson, Kotz & Balakrishnan vol. 1, ch. 14.
 */
import { z } from 'zod';
import { normCdf, normLogPdf, normQuantile } from '../../numerics/special.js';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import type { Distribution } from './types.js';

export const logNormalSchema = z.strictObject({
  family: z.literal('log-normal'),
  mu: z.number().describe('mean of log x'),
  sigma: z.number().positive().describe('standard deviation of log x, > 0'),
});
export type LogNormalSpec = z.infer<typeof logNormalSchema>;

export class LogNormal implements Distribution {
  readonly family = 'log-normal';
  readonly support = [0, Infinity] as const;
  // log-concave in x only for small sigma; we never rely on it.
  readonly logConcave = false;
  /** log X is Gaussian. */
  readonly logConcaveInLog = true;
  private readonly logSigma: number;
  constructor(readonly mu: number, readonly sigma: number) {
    this.logSigma = Math.log(sigma);
  }
  logPdf(x: number): number {
    if (!(x > 0)) return -Infinity;
    const lx = Math.log(x);
    return normLogPdf((lx - this.mu) / this.sigma) - this.logSigma - lx;
  }
  cdf(x: number): number {
    return x > 0 ? normCdf((Math.log(x) - this.mu) / this.sigma) : 0;
  }
  quantile(p: number): number {
    return Math.exp(this.mu + this.sigma * normQuantile(p));
  }
  sample(rand: RandomStream): number {
    return Math.exp(this.mu + this.sigma * drawStandardNormal(rand));
  }
  mean(): number {
    return Math.exp(this.mu + 0.5 * this.sigma * this.sigma);
  }
  featureScale(): number {
    // Width of the density near its mode, where it is narrowest.
    return Math.exp(this.mu - this.sigma * this.sigma) * (Math.exp(this.sigma) - 1);
  }
}

export const logNormalFamily = {
  name: 'log-normal' as const,
  summary: 'positive magnitudes whose logarithm is normal (mu, sigma of log x)',
  schema: logNormalSchema,
  create: (s: LogNormalSpec): Distribution => new LogNormal(s.mu, s.sigma),
};
