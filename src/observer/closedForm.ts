/**
 * Closed-form Bayes estimates where the posterior is known exactly.
 *  - Gaussian prior N(μp, σp²) with constant Gaussian noise σs: posterior
 *    N((σp² m + σs² μp)/(σp²+σs²), σp²σs²/(σp²+σs²)) (Gelman et al., Bayesian
 *    Data Analysis, ch. 2). Symmetric and unimodal, so every symmetric loss gives
 *    the mean; asymmetric-linear gives μ + s·Φ⁻¹(τ) (Berger 1985, §4.4.2).
 *  - Log-normal prior with log-space noise: the posterior of log x is Gaussian,
 *    so x is log-normal with mean e^(μ+s²/2), median e^μ, mode e^(μ−s²)
 *    (Johnson, Kotz & Balakrishnan vol. 1, ch. 14).
 * Returns null where no closed form applies; the numeric path is used then.
 */
import { normQuantile } from '../numerics/special.js';
import { Gaussian } from './distributions/gaussian.js';
import { LogNormal } from './distributions/logNormal.js';
import { ConstantNoise } from './noise/constant.js';
import { LogGaussianNoise } from './noise/logGaussian.js';
import type { Observer } from './observer.js';
import type { SensoryNoise } from './noise/types.js';

/** x̂(m) = intercept + slope·m, for the conjugate Gaussian case. */
export interface LinearEstimate {
  kind: 'linear';
  intercept: number;
  slope: number;
}
export interface LogNormalEstimate {
  kind: 'log-linear';
  /** x̂(m) = exp(intercept + slope·m) */
  intercept: number;
  slope: number;
}
export type ClosedFormEstimate = LinearEstimate | LogNormalEstimate;

export function gaussianPosterior(muP: number, sdP: number, sdS: number, m: number): { mean: number; sd: number } {
  const vp = sdP * sdP;
  const vs = sdS * sdS;
  return { mean: (vp * m + vs * muP) / (vp + vs), sd: Math.sqrt((vp * vs) / (vp + vs)) };
}

export function closedFormEstimate(obs: Observer, noise: SensoryNoise): ClosedFormEstimate | null {
  const { prior, loss } = obs;
  if (prior instanceof Gaussian && noise instanceof ConstantNoise) {
    const vp = prior.sd * prior.sd;
    const vs = noise.sd * noise.sd;
    const slope = vp / (vp + vs);
    const s = Math.sqrt((vp * vs) / (vp + vs));
    let intercept = (vs * prior.mu) / (vp + vs);
    if (loss.family === 'asymmetric-linear') {
      const spread = obs.motorAware ? Math.sqrt(s * s + obs.motorSd * obs.motorSd) : s;
      intercept += spread * normQuantile(loss.params.level);
    } else if (!loss.symmetric) return null;
    return { kind: 'linear', intercept, slope };
  }
  if (prior instanceof LogNormal && noise instanceof LogGaussianNoise && !obs.motorAware) {
    const vp = prior.sigma * prior.sigma;
    const vs = noise.sd * noise.sd;
    const slope = vp / (vp + vs);
    const s2 = (vp * vs) / (vp + vs);
    const base = (vs * prior.mu) / (vp + vs);
    switch (loss.family) {
      case 'squared':
        return { kind: 'log-linear', intercept: base + 0.5 * s2, slope };
      case 'absolute':
        return { kind: 'log-linear', intercept: base, slope };
      case 'asymmetric-linear':
        return { kind: 'log-linear', intercept: base + Math.sqrt(s2) * normQuantile(loss.params.level), slope };
      default:
        return null;
    }
  }
  return null;
}

export function evaluateClosedForm(cf: ClosedFormEstimate, m: number): number {
  return cf.kind === 'linear' ? cf.intercept + cf.slope * m : Math.exp(cf.intercept + cf.slope * m);
}
