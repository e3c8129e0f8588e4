/**
 * Smooth maps from the whole real line onto a parameter's bounded range, so
 * unconstrained optimisers can work on bounded parameters:
 *  - 'log':   θ = exp(log lo + (log hi − log lo)·σ(z)) for positive scales,
 *  - 'logit': θ = lo + (hi − lo)·σ(z) for rates and bounded levels,
 * with σ the logistic function. Both are bounded on both sides, so a fit can
 * never wander to a degenerate value.
 */
export type Transform = 'log' | 'logit';

export interface Bounded {
  lower: number;
  upper: number;
  transform: Transform;
}

const sigmoid = (z: number) => (z >= 0 ? 1 / (1 + Math.exp(-z)) : Math.exp(z) / (1 + Math.exp(z)));
const logit = (p: number) => Math.log(p / (1 - p));

export function toParameter(b: Bounded, z: number): number {
  const s = sigmoid(z);
  let theta: number;
  if (b.transform === 'log') {
    const a = Math.log(b.lower);
    theta = Math.exp(a + (Math.log(b.upper) - a) * s);
  } else theta = b.lower + (b.upper - b.lower) * s;
  // exp(log hi) and lo + (hi − lo) can round a few ulps past a bound at saturated z.
  return Math.min(b.upper, Math.max(b.lower, theta));
}

export function toFree(b: Bounded, theta: number): number {
  let p: number;
  if (b.transform === 'log') {
    const a = Math.log(b.lower);
    p = (Math.log(theta) - a) / (Math.log(b.upper) - a);
  } else p = (theta - b.lower) / (b.upper - b.lower);
  p = Math.min(1 - 1e-12, Math.max(1e-12, p));
  return logit(p);
}

/** dθ/dz, for mapping standard errors from the free space (delta method). */
export function jacobian(b: Bounded, z: number): number {
  const s = sigmoid(z);
  const ds = s * (1 - s);
  if (b.transform === 'log') return toParameter(b, z) * (Math.log(b.upper) - Math.log(b.lower)) * ds;
  return (b.upper - b.lower) * ds;
}
