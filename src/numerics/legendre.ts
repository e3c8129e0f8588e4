/**
 * Legendre series on [−1, 1]: values, antiderivatives from −1, and the
 * discrete transform from values at Gauss–Legendre nodes (exact for
 * polynomials of degree < n; Abramowitz & Stegun 22.7.10 and 22.13.9 for the
 * recurrences used).
 */
import { gaussLegendre } from './gaussRules.js';

const transformCache = new Map<number, Float64Array>();

/** Matrix T[k*n + i] such that coefficient a_k = Σ_i T[k*n+i] f(t_i). Cached per size and shared: do not modify. */
export function legendreTransform(n: number): Float64Array {
  const cached = transformCache.get(n);
  if (cached) return cached;
  const { nodes, weights } = gaussLegendre(n);
  const t = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    let p0 = 1;
    let p1 = nodes[i];
    for (let k = 0; k < n; k++) {
      const pk = k === 0 ? 1 : k === 1 ? nodes[i] : 0;
      let val = pk;
      if (k >= 2) {
        const p2 = ((2 * k - 1) * nodes[i] * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
        val = p2;
      }
      t[k * n + i] = ((2 * k + 1) / 2) * weights[i] * val;
    }
  }
  transformCache.set(n, t);
  return t;
}

/** Σ a_k P_k(t) */
export function legendreValue(a: Float64Array, offset: number, n: number, t: number): number {
  let p0 = 1;
  let p1 = t;
  let s = a[offset] + (n > 1 ? a[offset + 1] * t : 0);
  for (let k = 2; k < n; k++) {
    const p2 = ((2 * k - 1) * t * p1 - (k - 1) * p0) / k;
    s += a[offset + k] * p2;
    p0 = p1;
    p1 = p2;
  }
  return s;
}

/** ∫_{−1}^{t} Σ a_k P_k(s) ds, using ∫P_k = (P_{k+1} − P_{k−1})/(2k+1). */
export function legendreIntegral(a: Float64Array, offset: number, n: number, t: number): number {
  // P values up to degree n
  let pm1 = 1; // P_0
  let p = t; // P_1
  let s = a[offset] * (t + 1);
  for (let k = 1; k < n; k++) {
    const pNext = ((2 * k + 1) * t * p - k * pm1) / (k + 1);
    s += (a[offset + k] * (pNext - pm1)) / (2 * k + 1);
    pm1 = p;
    p = pNext;
  }
  return s;
}
