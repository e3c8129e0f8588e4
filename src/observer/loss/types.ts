/**
 * One interface for every loss family: the loss as a function of the error
 * (estimate − true value), so it can be plotted, and the Bayes estimate, the
 * response minimising the posterior expected loss.
 */
import type { GridPosterior } from '../gridPosterior.js';

export interface LossFunction {
  readonly family: string;
  readonly params: Readonly<Record<string, number>>;
  loss(error: number): number;
  /** Bayes estimate for the current posterior; `hint` is the estimate at a neighbouring measurement. */
  estimate(post: GridPosterior, hint: number): number;
  /**
   * Optional: the estimate at measurement m, for a loss that needs less than
   * the stored, normalised posterior (the squared loss only its mean). Must
   * return what setMeasurement(m) then estimate(post, hint) would; what `post`
   * holds afterwards is unspecified (call setMeasurement before reading it).
   * Not used for motor-aware observers, whose posterior is convolved first.
   */
  estimateAt?(post: GridPosterior, m: number, hint: number): number;
  /** The estimate can jump as the measurement moves (bimodal posteriors, non-convex losses). */
  readonly mayJump: boolean;
  /** L(e) = L(−e). */
  readonly symmetric: boolean;
}

/** Description of a loss parameter, shared by the schema, the fitter and the docs. */
export interface LossParameter {
  name: string;
  description: string;
  min: number;
  max: number;
  /** Transform used when the parameter is fitted. */
  transform: 'log' | 'logit';
  typical: number;
}
