/**
 * Pearson product-moment and Spearman rank correlation of paired samples.
 *
 * References: K. Pearson (1895), "Notes on regression and inheritance in the
 * case of two parents", Proceedings of the Royal Society of London 58:240–242;
 * C. Spearman (1904), "The proof and measurement of association between two
 * things", American Journal of Psychology 15:72–101. Tied values receive the
 * mean of the ranks they span, and ρ is then Pearson's r of the ranks, which
 * stays exact with ties (M. G. Kendall & J. D. Gibbons, Rank Correlation
 * Methods, 5th ed., 1990, ch. 3), unlike the shortcut 1 − 6Σd²/(n(n²−1)).
 */

function checkPaired(x: readonly number[], y: readonly number[]): void {
  if (x.length !== y.length) throw new RangeError(`correlation needs paired samples, got lengths ${x.length} and ${y.length}`);
}

function mean(x: readonly number[]): number {
  let s = 0;
  for (const v of x) s += v;
  return s / x.length;
}

/**
 * Pearson's r. NaN when fewer than two pairs, when either sample is constant
 * (r is undefined, not 0), or when any value is NaN. Two-pass (centred) sums,
 * because the one-pass formula Σxy − n·x̄ȳ cancels badly when the values sit
 * far from zero relative to their spread, as fitted parameters often do.
 */
export function pearson(x: readonly number[], y: readonly number[]): number {
  checkPaired(x, y);
  const n = x.length;
  if (n < 2) return NaN;
  // Test constancy directly: a computed variance of a constant sample can be a rounding speck above zero.
  if (x.every((v) => v === x[0]) || y.every((v) => v === y[0])) return NaN;
  const mx = mean(x);
  const my = mean(y);
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  if (!(sxx > 0 && syy > 0)) return NaN;
  // Rounding can put |r| a hair above 1 for perfectly linear data.
  return Math.max(-1, Math.min(1, sxy / Math.sqrt(sxx * syy)));
}

/** Ranks 1..n, ties sharing the mean of their positions. Any NaN makes every rank NaN (there is no order to use). */
export function averageRanks(x: readonly number[]): number[] {
  if (x.some(Number.isNaN)) return x.map(() => NaN);
  const order = x.map((_, i) => i).sort((a, b) => x[a] - x[b] || a - b);
  const ranks = new Array<number>(x.length);
  let start = 0;
  while (start < order.length) {
    let end = start + 1;
    while (end < order.length && x[order[end]] === x[order[start]]) end++;
    // Positions start..end−1 (0-based) are ranks start+1..end; their mean is (start + 1 + end) / 2.
    const r = (start + 1 + end) / 2;
    for (let k = start; k < end; k++) ranks[order[k]] = r;
    start = end;
  }
  return ranks;
}

/** Spearman's ρ: Pearson's r of the average ranks. */
export function spearman(x: readonly number[], y: readonly number[]): number {
  checkPaired(x, y);
  return pearson(averageRanks(x), averageRanks(y));
}
