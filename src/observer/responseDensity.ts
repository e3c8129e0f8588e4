/**
 * Response density p(r | x, θ) = (1−λ)·∫ N(r; x̂(m), σ_m²) p(m | x) dm + λ/range,
 * with point masses at the ends of a censored scale.
 *
 * The integral over m runs on the estimate curve's grid in warped measurement
 * coordinates, by the trapezoid rule with each segment subdivided until x̂
 * moves by less than 0.7 σ_m between points. Because the step then differs
 * between segments, each segment carries its Euler–Maclaurin end correction
 * −d²/12·(g′(b) − g′(a)) with g′ computed analytically (Abramowitz & Stegun
 * 25.4.7); where steps are equal the corrections telescope away. That keeps the motor kernel resolved however small
 * σ_m is relative to the slope of x̂ times the sensory noise (where a fixed
 * rule over m fails). Segments whose x̂ range cannot reach r within 9 σ_m are
 * skipped outright, which is what keeps small motor noise cheap.
 */
import { normCdf } from '../numerics/special.js';
import { closedFormEstimate, evaluateClosedForm, type ClosedFormEstimate } from './closedForm.js';
import { EstimateCurve } from './estimateCurve.js';
import type { Dataset, Observer } from './observer.js';
import type { SensoryNoise } from './noise/types.js';
import { LIKELIHOOD_MARGIN } from './gridFactory.js';

const SUBSTEP = 0.7;
const MAX_SUB = 4000;
const KERNEL_CUT = 9;
const TINY = 1e-300;
const INV_2PI = 1 / (2 * Math.PI);

type Kernel = 0 | 1 | 2; // 0: density at r, 1: P(response ≤ r), 2: P(response ≥ r)

export class ConditionResponse {
  readonly curve: EstimateCurve | null;
  readonly closed: ClosedFormEstimate | null;
  constructor(readonly obs: Observer, readonly noise: SensoryNoise, xLo: number, xHi: number) {
    this.closed = closedFormEstimate(obs, noise);
    this.curve = this.closed && this.closed.kind === 'linear' ? null : new EstimateCurve(obs, noise, xLo, xHi);
  }

  /** ∫ K(r, x̂(v)) p(v | x) dv without lapses. */
  integrate(x: number, r: number, kernel: Kernel): number {
    const obs = this.obs;
    const sm = obs.motorSd;
    if (this.closed && this.closed.kind === 'linear') {
      // x̂ linear in m and m Gaussian: the response is Gaussian before lapses.
      const mean = this.closed.intercept + this.closed.slope * x;
      const sd = Math.sqrt(this.closed.slope ** 2 * this.noise.sdAt(x) ** 2 + sm * sm);
      const z = (r - mean) / sd;
      if (kernel === 0) return Math.exp(-0.5 * z * z) / (sd * Math.sqrt(2 * Math.PI));
      return kernel === 1 ? normCdf(z) : normCdf(-z);
    }
    const curve = this.curve!;
    const { v, xh, slope, breakAfter, warpM } = curve;
    const c = this.noise.center(x);
    const sd = this.noise.sdAt(x);
    const vA = warpM.toU(c - LIKELIHOOD_MARGIN * sd);
    const vB = warpM.toU(c + LIKELIHOOD_MARGIN * sd);
    const i0 = curve.segmentOf(vA);
    const i1 = curve.segmentOf(vB);
    const reach = KERNEL_CUT * sm;
    const invSm = 1 / sm;
    const invSd = 1 / sd;
    const norm = INV_2PI * invSm * invSd;
    const pNorm = invSd / Math.sqrt(2 * Math.PI);
    let total = 0;
    // g'(v) at a curve node: derivative of K(r, x̂(v))·p(v | x).
    const gPrime = (node: number): number => {
      const vn = v[node];
      const m = warpM.fromU(vn);
      const J = warpM.dxdu(vn);
      const zm = (m - c) * invSd;
      const p = Math.exp(-0.5 * zm * zm) * J * pNorm;
      const dlogp = -zm * J * invSd + warpM.curvature(vn);
      const z = (r - xh[node]) * invSm;
      if (kernel === 0) {
        if (z > KERNEL_CUT || z < -KERNEL_CUT) return 0;
        const k = Math.exp(-0.5 * z * z) * invSm / Math.sqrt(2 * Math.PI);
        return p * k * (dlogp + z * invSm * slope[node]);
      }
      const phi = z > KERNEL_CUT || z < -KERNEL_CUT ? 0 : Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);
      const k = kernel === 1 ? (z > KERNEL_CUT ? 1 : z < -KERNEL_CUT ? 0 : normCdf(z)) : z < -KERNEL_CUT ? 1 : z > KERNEL_CUT ? 0 : normCdf(-z);
      const dk = (kernel === 1 ? -1 : 1) * phi * invSm * slope[node];
      return p * (dlogp * k + dk);
    };
    const correct = (i: number, a: number, b: number, d: number): void => {
      // Only at true nodes; clip points sit where p(v | x) is ~e^-55.
      const ga = a === v[i] ? gPrime(i) : 0;
      const gb = b === v[i + 1] ? gPrime(i + 1) : 0;
      total -= ((d * d) / 12) * (gb - ga);
    };
    for (let i = i0; i <= i1; i++) {
      if (breakAfter[i]) continue;
      const a = Math.max(v[i], vA);
      const b = Math.min(v[i + 1], vB);
      if (!(b > a)) continue;
      const h = v[i + 1] - v[i];
      const over = 0.25 * h * (Math.abs(slope[i]) + Math.abs(slope[i + 1]));
      const segLo = Math.min(xh[i], xh[i + 1]) - over;
      const segHi = Math.max(xh[i], xh[i + 1]) + over;
      const touches = segHi > r - reach && segLo < r + reach;
      if (!touches) {
        // Kernel is 0 or 1 over the whole segment.
        if (kernel === 0) continue;
        const inside = kernel === 1 ? segHi < r : segLo > r;
        if (!inside) continue;
        total += this.measurementMass(a, b, c, invSd, pNorm);
        correct(i, a, b, (b - a) / Math.max(1, Math.ceil((b - a) / 0.25)));
        continue;
      }
      const span = segHi - segLo;
      let n = Math.ceil(span / (SUBSTEP * sm));
      if (n < 1) n = 1;
      if (n > MAX_SUB) n = MAX_SUB;
      const d = (b - a) / n;
      correct(i, a, b, d);
      for (let s = 0; s <= n; s++) {
        const vs = a + s * d;
        const w = s === 0 || s === n ? 0.5 * d : d;
        const xs = curve.interpolate(i, vs);
        const z = (r - xs) * invSm;
        const m = warpM.fromU(vs);
        const zm = (m - c) * invSd;
        if (kernel === 0) {
          if (z > KERNEL_CUT || z < -KERNEL_CUT) continue;
          total += w * Math.exp(-0.5 * (z * z + zm * zm)) * warpM.dxdu(vs) * norm;
        } else {
          const k = kernel === 1 ? (z > KERNEL_CUT ? 1 : z < -KERNEL_CUT ? 0 : normCdf(z)) : z < -KERNEL_CUT ? 1 : z > KERNEL_CUT ? 0 : normCdf(-z);
          if (k === 0) continue;
          total += w * k * Math.exp(-0.5 * zm * zm) * warpM.dxdu(vs) * pNorm;
        }
      }
    }
    return total;
  }

  /** Trapezoid mass of the measurement density over [a, b] in v (coarse: the integrand is smooth there). */
  private measurementMass(a: number, b: number, c: number, invSd: number, pNorm: number): number {
    const warpM = this.curve!.warpM;
    const n = Math.max(1, Math.ceil((b - a) / 0.25));
    const d = (b - a) / n;
    let s = 0;
    for (let k = 0; k <= n; k++) {
      const vs = a + k * d;
      const zm = (warpM.fromU(vs) - c) * invSd;
      s += (k === 0 || k === n ? 0.5 : 1) * Math.exp(-0.5 * zm * zm) * warpM.dxdu(vs);
    }
    return s * d * pNorm;
  }

  /** Probability density (interior) or mass (censored end) of response r to stimulus x. */
  likelihood(x: number, r: number): number {
    const { lapseRate: lam, scale } = this.obs;
    const range = scale.upper - scale.lower;
    const tol = 1e-9 * range;
    if (scale.ends === 'censor') {
      if (r <= scale.lower + tol) return (1 - lam) * this.integrate(x, scale.lower, 1);
      if (r >= scale.upper - tol) return (1 - lam) * this.integrate(x, scale.upper, 2);
    }
    const lapse = r >= scale.lower && r <= scale.upper ? lam / range : 0;
    return (1 - lam) * this.integrate(x, r, 0) + lapse;
  }

  /** P(response ≤ r | x), lapses and censoring included. */
  cdf(x: number, r: number): number {
    const { lapseRate: lam, scale } = this.obs;
    const range = scale.upper - scale.lower;
    if (scale.ends === 'censor') {
      if (r < scale.lower) return 0;
      if (r >= scale.upper) return 1;
    }
    const lapse = r <= scale.lower ? 0 : r >= scale.upper ? 1 : (r - scale.lower) / range;
    return (1 - lam) * this.integrate(x, r, 1) + lam * lapse;
  }
}

/** Per-condition response models covering the stimuli of a dataset. */
export function responseModels(obs: Observer, data: Dataset): ConditionResponse[] {
  const nCond = obs.noise.length;
  const lo = new Array(nCond).fill(Infinity);
  const hi = new Array(nCond).fill(-Infinity);
  for (let t = 0; t < data.stimulus.length; t++) {
    const c = data.condition[t];
    const x = data.stimulus[t];
    if (x < lo[c]) lo[c] = x;
    if (x > hi[c]) hi[c] = x;
  }
  return obs.noise.map((noise, c) => (Number.isFinite(lo[c]) ? new ConditionResponse(obs, noise, lo[c], hi[c]) : (null as unknown as ConditionResponse)));
}

/** Log-likelihood of a dataset; every trial is floored at 1e-300 so the sum is always finite. */
export function logLikelihood(obs: Observer, data: Dataset): number {
  const models = responseModels(obs, data);
  let s = 0;
  for (let t = 0; t < data.stimulus.length; t++) {
    const p = models[data.condition[t]].likelihood(data.stimulus[t], data.response[t]);
    s += Math.log(p > TINY ? p : TINY);
  }
  return s;
}

export { evaluateClosedForm };
