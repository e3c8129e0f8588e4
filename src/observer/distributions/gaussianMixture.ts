/**
 * Mixture of Gaussians Σ w_k N(mean_k, sd_k²), weights normalised to sum 1.
 * Bimodal priors of this kind make posteriors bimodal, so mode-seeking
 * estimates can jump: the estimate code must not assume continuity here.
 */
import { z } from 'zod';
import { logSumExp, normCdf, normLogPdf } from '../../numerics/special.js';
import { drawStandardNormal, type RandomStream } from '../../numerics/rng.js';
import { bisectMonotone } from '../../numerics/roots.js';
import type { Distribution } from './types.js';

const componentSchema = z.strictObject({
  weight: z.number().positive().describe('relative weight, > 0 (weights are normalised)'),
  mean: z.number(),
  sd: z.number().positive().describe('standard deviation, > 0'),
});

export const gaussianMixtureSchema = z.strictObject({
  family: z.literal('gaussian-mixture'),
  components: z.array(componentSchema).min(1, 'a mixture needs at least one component'),
});
export type GaussianMixtureSpec = z.infer<typeof gaussianMixtureSchema>;

export class GaussianMixture implements Distribution {
  readonly family = 'gaussian-mixture';
  readonly support = [-Infinity, Infinity] as const;
  readonly logConcave: boolean;
  readonly logConcaveInLog = false;
  private readonly logW: number[];
  private readonly w: number[];
  private readonly mu: number[];
  private readonly sd: number[];
  private readonly logSd: number[];
  private readonly scratch: Float64Array;
  constructor(components: readonly { weight: number; mean: number; sd: number }[]) {
    const total = components.reduce((s, c) => s + c.weight, 0);
    this.w = components.map((c) => c.weight / total);
    this.logW = this.w.map(Math.log);
    this.mu = components.map((c) => c.mean);
    this.sd = components.map((c) => c.sd);
    this.logSd = this.sd.map(Math.log);
    this.scratch = new Float64Array(components.length);
    this.logConcave = components.length === 1;
  }
  logPdf(x: number): number {
    for (let k = 0; k < this.w.length; k++) {
      this.scratch[k] = this.logW[k] + normLogPdf((x - this.mu[k]) / this.sd[k]) - this.logSd[k];
    }
    return logSumExp(this.scratch);
  }
  cdf(x: number): number {
    let s = 0;
    for (let k = 0; k < this.w.length; k++) s += this.w[k] * normCdf((x - this.mu[k]) / this.sd[k]);
    return s;
  }
  quantile(p: number): number {
    if (p <= 0) return -Infinity;
    if (p >= 1) return Infinity;
    let lo = Infinity;
    let hi = -Infinity;
    for (let k = 0; k < this.w.length; k++) {
      lo = Math.min(lo, this.mu[k] - 40 * this.sd[k]);
      hi = Math.max(hi, this.mu[k] + 40 * this.sd[k]);
    }
    return bisectMonotone((x) => this.cdf(x) - p, lo, hi, 1e-15);
  }
  sample(rand: RandomStream): number {
    const u = rand();
    let acc = 0;
    let k = 0;
    for (; k < this.w.length - 1; k++) {
      acc += this.w[k];
      if (u < acc) break;
    }
    return this.mu[k] + this.sd[k] * drawStandardNormal(rand);
  }
  mean(): number {
    let s = 0;
    for (let k = 0; k < this.w.length; k++) s += this.w[k] * this.mu[k];
    return s;
  }
  featureScale(): number {
    return Math.min(...this.sd);
  }
}

export const gaussianMixtureFamily = {
  name: 'gaussian-mixture' as const,
  summary: 'weighted sum of Gaussian components (any number), e.g. a bimodal prior',
  schema: gaussianMixtureSchema,
  create: (s: GaussianMixtureSpec): Distribution => new GaussianMixture(s.components),
};
