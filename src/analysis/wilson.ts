/**
 * Wilson score interval for a binomial proportion.
 *
 * Reference: E. B. Wilson (1927), "Probable inference, the law of succession,
 * and statistical inference", Journal of the American Statistical
 * Association 22:209–212. Checked against the worked examples of
 * R. G. Newcombe (1998), "Two-sided confidence intervals for the single
 * proportion: comparison of seven methods", Statistics in Medicine
 * 17:857–872 (method 3, score interval without continuity correction).
 *
 * Recovery rates are often exactly 0 or 1, where the Wald interval
 * p ± z√(p(1−p)/n) collapses to a point. The Wilson interval stays inside
 * [0, 1], is never degenerate for n > 0, and keeps close to nominal coverage
 * at the small n of a recovery study (Newcombe 1998).
 */

/** Two-sided 95% standard normal quantile Φ⁻¹(0.975). */
export const Z95 = 1.959963984540054;

export interface Interval {
  estimate: number;
  lower: number;
  upper: number;
}

/** A proportion with the counts behind it, so a reader can recompute. */
export interface Proportion extends Interval {
  successes: number;
  n: number;
}

/**
 * Point estimate successes/n with its Wilson score interval. n = 0 gives NaN
 * throughout: there is no information, and a made-up [0, 1] would look like
 * a result.
 */
export function wilsonInterval(successes: number, n: number, z: number = Z95): Interval {
  if (!(Number.isFinite(n) && n >= 0)) throw new RangeError(`wilsonInterval: n must be a finite number ≥ 0, got ${n}`);
  if (!(Number.isFinite(successes) && successes >= 0 && successes <= n)) {
    throw new RangeError(`wilsonInterval: successes must lie in [0, n] = [0, ${n}], got ${successes}`);
  }
  if (!(Number.isFinite(z) && z > 0)) throw new RangeError(`wilsonInterval: z must be a finite number > 0, got ${z}`);
  if (n === 0) return { estimate: NaN, lower: NaN, upper: NaN };
  const p = successes / n;
  const z2 = z * z;
  const shrink = 1 + z2 / n;
  const centre = (p + z2 / (2 * n)) / shrink;
  const half = (z / shrink) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  // At p = 0 (p = 1) the lower (upper) bound is exactly 0 (1) in real
  // arithmetic; pin it so rounding cannot report 1e-17 or 0.9999999999999999.
  const lower = successes === 0 ? 0 : Math.max(0, centre - half);
  const upper = successes === n ? 1 : Math.min(1, centre + half);
  return { estimate: p, lower, upper };
}

/** wilsonInterval plus the counts. */
export function proportion(successes: number, n: number, z: number = Z95): Proportion {
  return { ...wilsonInterval(successes, n, z), successes, n };
}
