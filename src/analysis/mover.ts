/**
 * Confidence interval for a linear combination of independent proportions by
 * the method of variance estimates recovery (MOVER).
 *
 * Reference: G. Y. Zou & A. Donner (2008), "Construction of confidence limits
 * about effect measures: a general approach", Statistics in Medicine
 * 27:1693–1702; for the difference of two proportions it is method 10 of
 * R. G. Newcombe (1998), "Interval estimation for the difference between
 * independent proportions: comparison of eleven methods", Statistics in
 * Medicine 17:873–890.
 *
 * Each term's own interval (here Wilson) supplies its variance separately on
 * each side: for Σ cᵢθᵢ,
 *   L = Σ cᵢθᵢ − √Σ cᵢ²(θᵢ − ℓᵢ)²,  U = Σ cᵢθᵢ + √Σ cᵢ²(uᵢ − θᵢ)²,
 * with ℓᵢ and uᵢ swapped where cᵢ < 0. Used for balanced accuracy (the mean
 * of per-row recovery rates): unlike a Wald interval it does not collapse
 * when every row is at 0 or 1, and for a mean of proportions (all cᵢ > 0)
 * the limits stay inside [Σcᵢℓᵢ, Σcᵢuᵢ] ⊂ [0, 1].
 */
import type { Interval } from './wilson.js';

export interface MoverTerm extends Interval {
  /** Coefficient cᵢ of this term in the combination. */
  weight: number;
}

/** MOVER interval for Σ weightᵢ·estimateᵢ. Empty or non-finite input gives NaN. */
export function moverLinear(terms: readonly MoverTerm[]): Interval {
  const bad = { estimate: NaN, lower: NaN, upper: NaN };
  if (terms.length === 0) return bad;
  let estimate = 0;
  let down = 0;
  let up = 0;
  for (const t of terms) {
    if (![t.estimate, t.lower, t.upper, t.weight].every(Number.isFinite)) return bad;
    estimate += t.weight * t.estimate;
    // A negative coefficient turns the term's upper limit into the combination's lower side.
    const below = t.weight >= 0 ? t.estimate - t.lower : t.upper - t.estimate;
    const above = t.weight >= 0 ? t.upper - t.estimate : t.estimate - t.lower;
    down += (t.weight * below) ** 2;
    up += (t.weight * above) ** 2;
  }
  return { estimate, lower: estimate - Math.sqrt(down), upper: estimate + Math.sqrt(up) };
}

/** MOVER interval for the unweighted mean of K independent estimates. */
export function moverMean(intervals: readonly Interval[]): Interval {
  const w = 1 / intervals.length;
  return moverLinear(intervals.map((i) => ({ ...i, weight: w })));
}
