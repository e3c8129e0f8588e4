/**
 * One interface for every distribution family, used both for the experimenter's
 * stimulus distribution and for the observer's prior (in the spirit of a
 * uniform distribution interface: every family answers the same questions).
 */
import type { RandomStream } from '../../numerics/rng.js';

export interface Distribution {
  readonly family: string;
  /** Closed support [lower, upper]; ±Infinity where unbounded. */
  readonly support: readonly [number, number];
  logPdf(x: number): number;
  cdf(x: number): number;
  quantile(p: number): number;
  sample(rand: RandomStream): number;
  mean(): number;
  /**
   * Length of the narrowest feature of the density (e.g. the smallest component
   * sd of a mixture). Grids use it to resolve the posterior.
   */
  featureScale(): number;
  /** True when log-density is concave (so posteriors under log-concave likelihoods are unimodal). */
  readonly logConcave: boolean;
  /**
   * True when the density of log X (Jacobian included) is log-concave, so
   * that with noise Gaussian in log space every posterior is unimodal. Gamma
   * (any shape), log-normal and uniform priors on positive supports have it
   * although only some are log-concave in x.
   */
  readonly logConcaveInLog: boolean;
}
