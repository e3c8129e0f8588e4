/**
 * Trade-offs between parameters: correlations of the estimation errors
 * (fitted − true, in the fitted space) across the parameters of the
 * generating model's own fit.
 *
 * References: L. Acerbi, W. J. Ma & S. Vijayakumar (2014), "A framework for
 * testing identifiability of Bayesian models of perception", NeurIPS 27
 * (degeneracy between prior, noise and loss); R. C. Wilson & A. G. E.
 * Collins (2019), eLife 8:e49547, rule 6 (correlated parameter estimates).
 *
 * Errors are taken in the transformed (free) space the optimiser works in,
 * where the likelihood is closer to Gaussian, so a strong correlation there
 * marks a ridge the data cannot resolve: e.g. a larger motor noise that the
 * fit can swap for a smaller loss exponent. Correlations are pairwise over
 * jobs where both errors are finite, with the pair counts reported beside.
 */
import type { JobLine } from './types.js';
import { isFiniteNumber } from './jsonSafe.js';
import { pearson } from './correlation.js';
import { sortJobLines } from './jobKeys.js';

export interface Tradeoff {
  generating: string;
  parameters: string[];
  /** n[a][b]: jobs with finite errors in both a and b. */
  n: number[][];
  /** correlation[a][b]: Pearson r of the errors of a and b (1 on the diagonal unless undefined). */
  correlation: number[][];
}

/** Per generating model, in the order given. Lines are put in key order first, for reproducible sums. */
export function tradeoffs(lines: readonly JobLine[], generating: readonly string[]): Tradeoff[] {
  const sorted = sortJobLines(lines);
  return generating.map((g) => {
    const errors: Map<string, number>[] = [];
    const names: string[] = [];
    for (const line of sorted) {
      if (line.generating !== g || line.status !== 'ok') continue;
      const fit = line.fits.find((f) => f.model === g);
      if (!fit || fit.status !== 'ok') continue;
      const e = new Map<string, number>();
      for (const p of fit.parameters) {
        if (!names.includes(p.name)) names.push(p.name);
        const t = line.truthFree[p.name];
        if (isFiniteNumber(t) && isFiniteNumber(p.free)) e.set(p.name, p.free - t);
      }
      errors.push(e);
    }
    const n = names.map(() => new Array<number>(names.length).fill(0));
    const correlation = names.map(() => new Array<number>(names.length).fill(NaN));
    names.forEach((a, i) => {
      names.forEach((b, j) => {
        if (j < i) return;
        const xs: number[] = [];
        const ys: number[] = [];
        for (const e of errors) {
          const x = e.get(a);
          const y = e.get(b);
          if (x !== undefined && y !== undefined) {
            xs.push(x);
            ys.push(y);
          }
        }
        // The matrix is symmetric; compute each pair once so both halves are bit-identical.
        n[i][j] = n[j][i] = xs.length;
        const r = pearson(xs, ys);
        // r of a sample with itself is 1 in exact arithmetic; rounding may give 0.9999999999999999.
        correlation[i][j] = correlation[j][i] = i === j && Number.isFinite(r) ? 1 : r;
      });
    });
    return { generating: g, parameters: names, n, correlation };
  });
}
