/**
 * Predicted probability of choosing the generating model, as a function of
 * the trial count n, without simulation.
 *
 * For generating model i and rival j, the fitted criterion difference is
 *   C_j − C_i = 2(L̂_i − L̂_j) + pen_j − pen_i.
 * At the pseudo-true values the per-trial log-likelihood ratio has mean
 * D(i‖j) and variance v (distinguishability.ts), so by the central limit
 * theorem 2(L_i − L_j) ≈ N(2nD, 4nv); fitting adds on average (k_i − k_j)
 * (each fitted parameter gains about ½ in log-likelihood: Akaike 1974, IEEE
 * Trans. Autom. Control 19, the bias argument behind AIC). Hence
 *   P(i beats j) ≈ Φ((2nD + k_i − k_j + pen_j − pen_i) / (2√(nv))).
 * Where j reproduces i exactly (D = 0, nested or equivalent) the ratio has no
 * normal part; Wilks' theorem (Wilks 1938, Ann. Math. Stat. 9) gives
 * 2(L̂_j − L̂_i) ~ χ²_{k_j − k_i} when j has more parameters, so
 * P(i beats j) = P(χ²_{Δk} < pen_j − pen_i); with equal counts the fits tie
 * and the dataset is not a correct choice. P(correct | i) multiplies the
 * pairwise chances (treating rivals as independent, an approximation that
 * overstates accuracy when rivals are alike).
 *
 * Penalties: AIC 2k (Akaike 1974), AICc 2k + 2k(k+1)/(n−k−1) (Hurvich & Tsai
 * 1989), BIC k ln n (Schwarz 1978); cross-validation is treated as AIC, to
 * which it is asymptotically equivalent (Stone 1977, JRSS B 39).
 */
import jStat from 'jstat';
import { normCdf } from '../numerics/special.js';
import { ZERO_DIVERGENCE, type Divergence } from './distinguishability.js';

export type CriterionName = 'aic' | 'aicc' | 'bic' | 'cv';

export function penalty(criterion: CriterionName, k: number, n: number): number {
  switch (criterion) {
    case 'bic':
      return k * Math.log(n);
    case 'aicc':
      return n - k - 1 > 0 ? 2 * k + (2 * k * (k + 1)) / (n - k - 1) : Infinity;
    default:
      return 2 * k;
  }
}

const chi2Cdf = (x: number, df: number) => (x <= 0 ? 0 : jStat.lowRegGamma(df / 2, x / 2));

/** P(generating i is preferred to rival j) after n trials. */
export function pairwiseWin(d: Divergence, kI: number, kJ: number, n: number, criterion: CriterionName): number {
  const gap = penalty(criterion, kJ, n) - penalty(criterion, kI, n);
  if (d.kl < ZERO_DIVERGENCE) {
    if (kJ > kI) return chi2Cdf(gap, kJ - kI);
    if (kJ < kI) return 1 - chi2Cdf(-gap, kI - kJ);
    return 0;
  }
  const sd = 2 * Math.sqrt(n * Math.max(d.variance, 0));
  const mean = 2 * n * d.kl + (kI - kJ) + gap;
  if (!(sd > 0)) return mean > 0 ? 1 : 0;
  return normCdf(mean / sd);
}

export function predictedCorrect(rivals: readonly Divergence[], k: Record<string, number>, generating: string, n: number, criterion: CriterionName): number {
  let p = 1;
  for (const d of rivals) if (d.candidate !== generating) p *= pairwiseWin(d, k[generating], k[d.candidate], n, criterion);
  return p;
}

/** Trial counts on which the curve is reported and searched: 10 to 20000, 48 per decade (steps of about 5%). */
export const TRIAL_GRID: number[] = (() => {
  const out: number[] = [];
  for (let e = 1; e <= 4.31; e += 1 / 48) {
    const v = Math.round(10 ** e);
    if (out[out.length - 1] !== v) out.push(v);
  }
  return out;
})();

/** Smallest trial count on the grid from which the predicted accuracy stays at or above the target; null when never. */
export function trialsToReach(curve: readonly { trials: number; p: number }[], target: number): number | null {
  let answer: number | null = null;
  for (let i = curve.length - 1; i >= 0; i--) {
    if (curve[i].p >= target) answer = curve[i].trials;
    else break;
  }
  return answer;
}
