/**
 * e^{−x} for 0 ≤ x ≤ EXP_TABLE_MAX, about three times faster than Math.exp in
 * the response density's inner loop (measured on Node 20: ≈ 3 ns against
 * ≈ 10 ns), where the arguments always lie in that fixed range.
 *
 * Table-driven range reduction (Tang, "Table-driven implementation of the
 * exponential function in IEEE floating-point arithmetic", ACM TOMS 15:144,
 * 1989): x = i/128 + f with i the nearest multiple and |f| ≤ 1/256, e^{−x} =
 * e^{−i/128}·e^{−f}, the second factor by its Taylor polynomial of degree 4,
 * whose relative error is below (1/256)⁵/120 ≈ 8e−15. Written here rather than
 * taken from a library because the point is to avoid a call per node.
 *
 * The table (41 KB) trades size for a shorter polynomial: with 32 points per
 * unit and degree 5 (2e−14) the bench's 300 trial integrals took about 9%
 * longer and the squared loss's estimates about 4% (the polynomial, a chain
 * of dependent multiply-adds, was most of the cost of an exp).
 */
export const EXP_TABLE_MAX = 40;
const PER_UNIT = 128;
const TABLE = Float64Array.from({ length: EXP_TABLE_MAX * PER_UNIT + 2 }, (_, i) => Math.exp(-i / PER_UNIT));

/** e^{−x} for x in [0, EXP_TABLE_MAX] (relative error < 1e−13). */
export function expNeg(x: number): number {
  const i = (x * PER_UNIT + 0.5) | 0;
  const f = x - i * (1 / PER_UNIT);
  return TABLE[i] * (1 - f * (1 - f * (0.5 - f * (1 / 6 - f * (1 / 24)))));
}
