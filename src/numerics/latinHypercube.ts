/**
 * Latin hypercube sampling (McKay, Beckman & Conover 1979, Technometrics
 * 21:239–245): n points in [0, 1)^dims such that, in every dimension, each of
 * the n equal strata holds exactly one point. Strata are permuted by
 * Fisher–Yates (Durstenfeld 1964) and jittered uniformly within the stratum.
 *
 * All randomness comes from the caller's stream, consumed in a fixed order
 * (per dimension: n − 1 draws for the shuffle, then n jitters), so the design
 * depends only on the stream: multi-start fits stay reproducible.
 */

/** Largest double below 1, so a jitter that rounds up cannot leave [0, 1). */
const BELOW_ONE = 1 - Number.EPSILON / 2;

export function latinHypercube(n: number, dims: number, rand: () => number): number[][] {
  if (!Number.isInteger(n) || n < 0) throw new RangeError('n must be a non-negative integer');
  if (!Number.isInteger(dims) || dims < 0) throw new RangeError('dims must be a non-negative integer');
  const points: number[][] = Array.from({ length: n }, () => new Array<number>(dims).fill(0));
  const perm = new Array<number>(n);
  for (let d = 0; d < dims; d++) {
    for (let i = 0; i < n; i++) perm[i] = i;
    for (let i = n - 1; i > 0; i--) {
      // min() guards against a stream that returns exactly 1.
      const j = Math.min(i, Math.floor(rand() * (i + 1)));
      const tmp = perm[i];
      perm[i] = perm[j];
      perm[j] = tmp;
    }
    for (let i = 0; i < n; i++) {
      points[i][d] = Math.min(BELOW_ONE, (perm[i] + rand()) / n);
    }
  }
  return points;
}
