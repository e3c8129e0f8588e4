/**
 * Gamma distribution with shape k and scale θ: mean kθ, mode (k−1)θ for k ≥ 1
 * (Johnson, Kotz & Balakrishnan vol. 1, ch. 17). The regularised incomplete
 * gamma function comes from jstat; the quantile is polished by Newton steps.
 */
import { z } from 'zod';
import jStat from 'jstat';
import { drawGamma, type RandomStream } from '../../numerics/rng.js';
import type { Distribution } from './types.js';

export const gammaSchema = z.strictObject({
  family: z.literal('gamma'),
  shape: z.number().positive().describe('shape k, > 0 (priors need k ≥ 1 so the density is finite at 0)'),
  scale: z.number().positive().describe('scale θ, > 0'),
});
export type GammaSpec = z.infer<typeof gammaSchema>;

export class Gamma implements Distribution {
  readonly family = 'gamma';
  readonly support = [0, Infinity] as const;
  readonly logConcave: boolean;
  /** log X has density ∝ exp(k·u − e^u/θ), concave in u for every shape. */
  readonly logConcaveInLog = true;
  private readonly logNorm: number;
  constructor(readonly shape: number, readonly scale: number) {
    this.logNorm = jStat.gammaln(shape) + shape * Math.log(scale);
    this.logConcave = shape >= 1;
  }
  logPdf(x: number): number {
    if (x < 0) return -Infinity;
    if (x === 0) return this.shape === 1 ? -this.logNorm : this.shape > 1 ? -Infinity : Infinity;
    return (this.shape - 1) * Math.log(x) - x / this.scale - this.logNorm;
  }
  cdf(x: number): number {
    return x > 0 ? jStat.lowRegGamma(this.shape, x / this.scale) : 0;
  }
  quantile(p: number): number {
    if (p <= 0) return 0;
    if (p >= 1) return Infinity;
    let x = jStat.gammapinv(p, this.shape) * this.scale;
    if (!(x > 0)) x = this.mean() * 1e-3;
    for (let i = 0; i < 30; i++) {
      const step = (this.cdf(x) - p) / Math.exp(this.logPdf(x));
      if (!Number.isFinite(step)) break;
      const next = x - step;
      x = next > 0 ? next : x / 2;
      if (Math.abs(step) < 1e-14 * x) break;
    }
    return x;
  }
  sample(rand: RandomStream): number {
    return this.scale * drawGamma(this.shape, rand);
  }
  mean(): number {
    return this.shape * this.scale;
  }
  featureScale(): number {
    // Roughly the width of the peak: sd near the mode, never more than the sd.
    return this.scale * Math.min(Math.sqrt(this.shape), Math.max(Math.sqrt(Math.max(this.shape - 1, 0)), 0.25));
  }
}

export const gammaFamily = {
  name: 'gamma' as const,
  summary: 'positive, right-skewed magnitudes (shape k, scale θ)',
  schema: gammaSchema,
  create: (s: GammaSpec): Distribution => new Gamma(s.shape, s.scale),
};
