/**
 * Inversion matrix P(generating model | chosen model).
 *
 * Reference: R. C. Wilson & A. G. E. Collins (2019), "Ten simple rules for
 * the computational modeling of behavioral data", eLife 8:e49547, Box 2: the
 * inversion matrix p(simulated model | fit model) by Bayes' rule from the
 * confusion matrix.
 *
 * With a uniform prior over generating models, P(g | c) = P(c | g) / Σ_g' P(c | g'):
 * each column of the row-normalised confusion rates is normalised to 1. Using
 * rates rather than counts makes the prior uniform even when rows hold
 * unequal numbers of jobs (some failed, or a run still in progress).
 */
import type { ConfusionMatrix } from './confusion.js';

export interface Inversion {
  /** Generating models (rows of `rate`). */
  rows: string[];
  /** Chosen models (columns of `rate`). */
  columns: string[];
  /** rate[i][j] = P(generating i | chosen j); NaN for a column never chosen, and in rows without jobs. */
  rate: number[][];
  /** Jobs that chose each column, over all rows. */
  chosen: number[];
}

/**
 * Column-normalise a row-stochastic rate matrix. A row whose rates are not
 * finite (a generating model without jobs) carries no evidence: it is left
 * out of the normalisation and its entries are NaN, rather than silently
 * counting as "never chooses anything".
 */
export function invertRates(rate: readonly (readonly number[])[]): number[][] {
  const R = rate.length;
  const C = R > 0 ? rate[0].length : 0;
  const usable = rate.map((row) => row.every(Number.isFinite));
  const out = rate.map(() => new Array<number>(C).fill(NaN));
  for (let j = 0; j < C; j++) {
    let total = 0;
    for (let i = 0; i < R; i++) if (usable[i]) total += rate[i][j];
    if (!(total > 0)) continue;
    for (let i = 0; i < R; i++) if (usable[i]) out[i][j] = rate[i][j] / total;
  }
  return out;
}

export function inversionMatrix(c: ConfusionMatrix): Inversion {
  const chosen = c.columns.map((_, j) => c.counts.reduce((s, row) => s + row[j], 0));
  return { rows: [...c.rows], columns: [...c.columns], rate: invertRates(c.rate), chosen };
}
