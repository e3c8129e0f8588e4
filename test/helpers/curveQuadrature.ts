/**
 * A slow, plain reference for the response-density quadrature alone: the
 * integral ∫ N(r; x̂(v), σ_m²) p(v | x) dv over the SAME estimate curve the
 * project uses (its Hermite pieces, split at its breaks), by composite
 * Simpson on each piece with a step far below every feature of the integrand
 * (1/64 of the narrowest of the sensory sd and σ_m / max slope, capped at
 * 1/64 sd), over the window of ±10 sensory sds. Comparing the project's
 * density with this isolates the quadrature error from the error of x̂
 * itself (which test/likelihoodReference.test.ts covers).
 */
import { hermite } from '../../src/observer/estimateCurve.js';
import type { EstimateCurve } from '../../src/observer/estimateCurve.js';
import type { SensoryNoise } from '../../src/observer/noise/types.js';

export function curveDensity(curve: EstimateCurve, noise: SensoryNoise, motorSd: number, x: number, r: number, fineness = 64): number {
  const { v, xh, slope, breakAfter, warpM } = curve;
  const c = noise.center(x);
  const sd = noise.sdAt(x);
  const lo = warpM.toU(c - 10 * sd);
  const hi = warpM.toU(c + 10 * sd);
  let steep = 0;
  for (let j = 0; j < v.length; j++) if (v[j] > lo - 1 && v[j] < hi + 1) steep = Math.max(steep, Math.abs(slope[j]));
  const sensoryWidth = Math.min(sd / warpM.dxdu(warpM.toU(c)), 1);
  const h = Math.min(sensoryWidth, steep > 0 ? motorSd / steep : Infinity) / fineness;
  const f = (u: number, j: number) => {
    const m = warpM.fromU(u);
    const zm = (m - c) / sd;
    const z = (r - hermite(v, xh, slope, j, u)) / motorSd;
    return (Math.exp(-0.5 * (zm * zm + z * z)) * warpM.dxdu(u)) / (2 * Math.PI * sd * motorSd);
  };
  let total = 0;
  for (let j = 0; j + 1 < v.length; j++) {
    if (breakAfter[j]) continue;
    const a = Math.max(v[j], lo);
    const b = Math.min(v[j + 1], hi);
    if (!(b > a)) continue;
    const n = 2 * Math.max(1, Math.ceil((b - a) / (2 * h)));
    const d = (b - a) / n;
    let s = f(a, j) + f(b, j);
    for (let i = 1; i < n; i++) s += (i % 2 ? 4 : 2) * f(a + i * d, j);
    total += (s * d) / 3;
  }
  return total;
}
