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
import { segmentIndex } from '../numerics/search.js';
import { closedFormEstimate, evaluateClosedForm, type ClosedFormEstimate } from './closedForm.js';
import { EstimateCurve, hermite, hermiteDerivative } from './estimateCurve.js';
import type { Dataset, Observer } from './observer.js';
import type { SensoryNoise } from './noise/types.js';

const SUBSTEP = 0.7;
const MAX_SUB = 4000;
const KERNEL_CUT = 9;
const TINY = 1e-300;
const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);
/** Measurements beyond 8.5 sensory sds from the stimulus carry < 1e-15 of the mass. */
const WINDOW = 8.5;

type Kernel = 0 | 1 | 2; // 0: density at r, 1: P(response ≤ r), 2: P(response ≥ r)
type TailKernel = 1 | 2;

/** Φ(z) for kernel 1, Φ(−z) for kernel 2, exactly 0 or 1 beyond the cut. */
function tailKernel(kernel: TailKernel, z: number): number {
  if (kernel === 1) return z > KERNEL_CUT ? 1 : z < -KERNEL_CUT ? 0 : normCdf(z);
  return z < -KERNEL_CUT ? 1 : z > KERNEL_CUT ? 0 : normCdf(-z);
}

export class ConditionResponse {
  readonly curve: EstimateCurve | null;
  readonly closed: ClosedFormEstimate | null;
  /** Integration grid: uniform half-sd steps merged with every curve node. */
  private readonly v: Float64Array;
  private readonly xh: Float64Array;
  private readonly slope: Float64Array;
  private readonly breakAfter: Uint8Array;
  private readonly nodeM: Float64Array;
  private readonly nodeJ: Float64Array;
  private readonly nodeCurv: Float64Array;
  private readonly gVal: Float64Array;
  private readonly gDer: Float64Array;
  private readonly pVal: Float64Array;
  private readonly pDer: Float64Array;
  private readonly stampOf: Int32Array;
  private stamp = 0;

  constructor(readonly obs: Observer, readonly noise: SensoryNoise, xLo: number, xHi: number) {
    this.closed = closedFormEstimate(obs, noise);
    this.curve = this.closed && this.closed.kind === 'linear' ? null : new EstimateCurve(obs, noise, xLo, xHi);
    const grid = this.curve ? integrationGrid(this.curve) : { v: new Float64Array(0), xh: new Float64Array(0), slope: new Float64Array(0), breakAfter: new Uint8Array(0) };
    this.v = grid.v;
    this.xh = grid.xh;
    this.slope = grid.slope;
    this.breakAfter = grid.breakAfter;
    const n = this.v.length;
    this.nodeM = new Float64Array(n);
    this.nodeJ = new Float64Array(n);
    this.nodeCurv = new Float64Array(n);
    this.gVal = new Float64Array(n);
    this.gDer = new Float64Array(n);
    this.pVal = new Float64Array(n);
    this.pDer = new Float64Array(n);
    this.stampOf = new Int32Array(n).fill(-1);
    if (this.curve) {
      this.buildSegments();
      const w = this.curve.warpM;
      for (let k = 0; k < n; k++) {
        const vk = this.v[k];
        this.nodeM[k] = w.fromU(vk);
        this.nodeJ[k] = w.dxdu(vk);
        this.nodeCurv[k] = w.curvature(vk);
      }
    }
  }

  private cur = { c: 0, invSd: 1, pNorm: 1, r: 0, invSm: 1, kernel: 1 as TailKernel, stamp: 0 };

  /** Tail kernels: node values of g = K·p and g′ (and of p, p′ for the kernel-free parts), once per node per trial. */
  private evalNode(k: number): void {
    const { c, invSd, pNorm, r, invSm, kernel, stamp } = this.cur;
    if (this.stampOf[k] === stamp) return;
    this.stampOf[k] = stamp;
    const J = this.nodeJ[k];
    const zm = (this.nodeM[k] - c) * invSd;
    const dlogp = -zm * J * invSd + this.nodeCurv[k];
    const z = (r - this.xh[k]) * invSm;
    const sl = this.slope[k];
    const p = Math.exp(-0.5 * zm * zm) * J * pNorm;
    this.pVal[k] = p;
    this.pDer[k] = p * dlogp;
    const inCut = z <= KERNEL_CUT && z >= -KERNEL_CUT;
    const phi = inCut ? Math.exp(-0.5 * z * z) * INV_SQRT_2PI : 0;
    const K = tailKernel(kernel, z);
    this.gVal[k] = p * K;
    this.gDer[k] = p * (dlogp * K + (kernel === 1 ? -1 : 1) * phi * invSm * sl);
  }

  /**
   * Per-segment quantities of the density kernel, all trial-independent: the
   * range of x̂ over the segment (chord widened by how far the cubic can stray),
   * and the blend of the n0- and (n0+1)-step trapezoid rules as an end weight,
   * an Euler–Maclaurin weight and a weighted point list (measurement, estimate,
   * weight·dm/dv). Points are built on a segment's first use and kept, so a
   * trial costs one exp per point and no interpolation or warping.
   */
  private segLo = new Float64Array(0);
  private segHi = new Float64Array(0);
  private segEnd = new Float64Array(0);
  private segEM = new Float64Array(0);
  private segQ = new Float64Array(0);
  /** First and past-last point of each segment; subFrom = −1 until built. */
  private subFrom = new Int32Array(0);
  private subTo = new Int32Array(0);
  private subM = new Float64Array(0);
  private subX = new Float64Array(0);
  private subW = new Float64Array(0);
  private subCount = 0;

  private buildSegments(): void {
    const n = this.v.length;
    const { v, xh, slope } = this;
    const sm = this.obs.motorSd;
    this.segLo = new Float64Array(n);
    this.segHi = new Float64Array(n);
    this.segEnd = new Float64Array(n);
    this.segEM = new Float64Array(n);
    this.segQ = new Float64Array(n);
    this.subFrom = new Int32Array(n);
    this.subTo = new Int32Array(n);
    for (let i = 0; i + 1 < n; i++) {
      const h = v[i + 1] - v[i];
      // Bound on how far the cubic strays from its chord (it bends by the slope change).
      const over = 0.25 * h * Math.abs(slope[i] - slope[i + 1]);
      const lo = Math.min(xh[i], xh[i + 1]) - over;
      const hi = Math.max(xh[i], xh[i + 1]) + over;
      this.segLo[i] = lo;
      this.segHi[i] = hi;
      const q = (hi - lo) / (SUBSTEP * sm);
      this.segQ[i] = q;
      this.segEnd[i] = h;
      this.segEM[i] = (h * h) / 12;
      this.subFrom[i] = q > 1 ? -1 : 0;
    }
  }

  private buildSubRule(i: number): void {
    const { v, xh, slope } = this;
    const warpM = this.curve!.warpM;
    const h = v[i + 1] - v[i];
    const q = this.segQ[i];
    const n0 = Math.min(MAX_SUB, Math.floor(q));
    const frac = n0 === MAX_SUB ? 0 : q - n0;
    const w = frac * frac * (3 - 2 * frac);
    const need = this.subCount + 2 * n0;
    if (need > this.subM.length) {
      const cap = Math.max(need, 2 * this.subM.length, 256);
      const grow = (a: Float64Array) => {
        const b = new Float64Array(cap);
        b.set(a.subarray(0, this.subCount));
        return b;
      };
      this.subM = grow(this.subM);
      this.subX = grow(this.subX);
      this.subW = grow(this.subW);
    }
    this.subFrom[i] = this.subCount;
    let end = 0;
    let em = 0;
    const rules: [number, number][] = w > 0 ? [[n0, 1 - w], [n0 + 1, w]] : [[n0, 1]];
    for (const [n, weight] of rules) {
      const d = h / n;
      end += weight * d;
      em += (weight * d * d) / 12;
      for (let s = 1; s < n; s++) {
        const vs = v[i] + s * d;
        const k = this.subCount++;
        this.subM[k] = warpM.fromU(vs);
        this.subX[k] = hermite(v, xh, slope, i, vs);
        this.subW[k] = weight * d * warpM.dxdu(vs);
      }
    }
    this.subTo[i] = this.subCount;
    this.segEnd[i] = end;
    this.segEM[i] = em;
  }

  /**
   * ∫ N(r; x̂(v), σ_m²) p(v | x) dv: the density kernel of integrate(), on the
   * cached sub-step rules. One exp per point; node values carried from one
   * segment to the next.
   */
  /** g′ at the node of the last densityNode call. */
  private nodeDer = 0;

  /** g = K·p at node k for the density kernel (0 beyond the kernel cut); g′ into nodeDer. */
  private densityNode(k: number, c: number, r: number, invSd: number, invSm: number, norm: number): number {
    const z = (r - this.xh[k]) * invSm;
    if (z > KERNEL_CUT || z < -KERNEL_CUT) {
      this.nodeDer = 0;
      return 0;
    }
    const zm = (this.nodeM[k] - c) * invSd;
    const J = this.nodeJ[k];
    const g = Math.exp(-0.5 * (zm * zm + z * z)) * J * norm;
    this.nodeDer = g * (-zm * J * invSd + this.nodeCurv[k] + z * invSm * this.slope[k]);
    return g;
  }

  private integrateDensity(x: number, r: number): number {
    const curve = this.curve!;
    const { v, breakAfter, segLo, segHi, segEnd, segEM, subFrom, subTo } = this;
    const sm = this.obs.motorSd;
    const c = this.noise.center(x);
    const sd = this.noise.sdAt(x);
    const warpM = curve.warpM;
    const i0 = segmentIndex(v, warpM.toU(c - WINDOW * sd));
    const i1 = segmentIndex(v, warpM.toU(c + WINDOW * sd));
    const reach = KERNEL_CUT * sm;
    const rLo = r - reach;
    const rHi = r + reach;
    const invSm = 1 / sm;
    const invSd = 1 / sd;
    const norm = invSd * INV_SQRT_2PI * invSm * INV_SQRT_2PI;
    let total = 0;
    let gPrev = 0;
    let dPrev = 0;
    let prevNode = -1;
    for (let i = i0; i <= i1; i++) {
      if (breakAfter[i] || !(segHi[i] > rLo && segLo[i] < rHi) || !(v[i + 1] > v[i])) continue;
      // Node values g = K·p and g′ at both ends (the left one carried over).
      let g0: number;
      let d0: number;
      if (prevNode === i) {
        g0 = gPrev;
        d0 = dPrev;
      } else {
        g0 = this.densityNode(i, c, r, invSd, invSm, norm);
        d0 = this.nodeDer;
      }
      const g1 = this.densityNode(i + 1, c, r, invSd, invSm, norm);
      const d1 = this.nodeDer;
      gPrev = g1;
      dPrev = d1;
      prevNode = i + 1;
      let acc = 0;
      if (subFrom[i] < 0) this.buildSubRule(i);
      const sM = this.subM;
      const sX = this.subX;
      const sW = this.subW;
      for (let s = subFrom[i], e = subTo[i]; s < e; s++) {
        const z = (r - sX[s]) * invSm;
        if (z > KERNEL_CUT || z < -KERNEL_CUT) continue;
        const zm = (sM[s] - c) * invSd;
        acc += sW[s] * Math.exp(-0.5 * (zm * zm + z * z));
      }
      total += 0.5 * segEnd[i] * (g0 + g1) + acc * norm - segEM[i] * (d1 - d0);
    }
    return total;
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
    if (kernel === 0) return this.integrateDensity(x, r);
    const curve = this.curve!;
    const { v, xh, slope, breakAfter } = this;
    const warpM = curve.warpM;
    const { gVal, gDer, pVal, pDer } = this;
    const c = this.noise.center(x);
    const sd = this.noise.sdAt(x);
    const i0 = segmentIndex(v, warpM.toU(c - WINDOW * sd));
    const i1 = segmentIndex(v, warpM.toU(c + WINDOW * sd));
    const reach = KERNEL_CUT * sm;
    const invSm = 1 / sm;
    const invSd = 1 / sd;
    const pNorm = invSd * INV_SQRT_2PI;
    const stamp = ++this.stamp;
    this.cur = { c, invSd, pNorm, r, invSm, kernel, stamp };
    let total = 0;
    for (let i = i0; i <= i1; i++) {
      if (breakAfter[i]) continue;
      const h = v[i + 1] - v[i];
      if (!(h > 0)) continue;
      // Bound on how far the cubic strays from its chord (it bends by the slope change).
      const over = 0.25 * h * Math.abs(slope[i] - slope[i + 1]);
      const segLo = Math.min(xh[i], xh[i + 1]) - over;
      const segHi = Math.max(xh[i], xh[i + 1]) + over;
      const touches = segHi > r - reach && segLo < r + reach;
      if (!touches) {
        // The kernel is 0 or 1 over the whole segment.
        if (!(kernel === 1 ? segHi < r : segLo > r)) continue;
        this.evalNode(i);
        this.evalNode(i + 1);
        total += 0.5 * h * (pVal[i] + pVal[i + 1]) - ((h * h) / 12) * (pDer[i + 1] - pDer[i]);
        continue;
      }
      this.evalNode(i);
      this.evalNode(i + 1);
      // Sub-steps so that x̂ moves less than SUBSTEP·σ_m between points. The
      // count is blended between ⌊q⌋ and ⌊q⌋+1 with a smooth weight, so the
      // integral has no steps as parameters move the count across an integer.
      const q = (segHi - segLo) / (SUBSTEP * sm);
      if (q <= 1) {
        // Trapezoid with its Euler–Maclaurin end correction; corrections of equal
        // neighbouring steps cancel, so the composite rule keeps its accuracy.
        total += 0.5 * h * (gVal[i] + gVal[i + 1]) - ((h * h) / 12) * (gDer[i + 1] - gDer[i]);
        continue;
      }
      const n0 = Math.min(MAX_SUB, Math.floor(q));
      const frac = n0 === MAX_SUB ? 0 : q - n0;
      const w = frac * frac * (3 - 2 * frac);
      const I0 = this.subdivided(i, n0, h, kernel);
      total += w > 0 ? (1 - w) * I0 + w * this.subdivided(i, n0 + 1, h, kernel) : I0;
    }
    return total;
  }

  /** Composite trapezoid over segment i with n sub-steps, with its end correction. */
  private subdivided(i: number, n: number, h: number, kernel: TailKernel): number {
    const { v } = this;
    const warpM = this.curve!.warpM;
    const { c, invSd, pNorm, r, invSm } = this.cur;
    if (n <= 1) return 0.5 * h * (this.gVal[i] + this.gVal[i + 1]) - ((h * h) / 12) * (this.gDer[i + 1] - this.gDer[i]);
    const d = h / n;
    let acc = 0.5 * (this.gVal[i] + this.gVal[i + 1]);
    for (let s = 1; s < n; s++) {
      const vs = v[i] + s * d;
      const xs = hermite(v, this.xh, this.slope, i, vs);
      const z = (r - xs) * invSm;
      if ((z > KERNEL_CUT || z < -KERNEL_CUT) && (kernel === 1 ? z < 0 : z > 0)) continue;
      const zm = (warpM.fromU(vs) - c) * invSd;
      acc += tailKernel(kernel, z) * Math.exp(-0.5 * zm * zm) * warpM.dxdu(vs) * pNorm;
    }
    return d * acc - ((d * d) / 12) * (this.gDer[i + 1] - this.gDer[i]);
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

/** Integration step in warped measurement units (noise sds): spectrally accurate for p(m | x). */
const INTEGRATION_STEP = 0.25;

/**
 * Merge a uniform grid (anchored at v = 0, so it moves continuously with the
 * noise parameters) with every node of the estimate curve. Between merged
 * nodes the cubic Hermite pieces reproduce the curve exactly, since values and
 * derivatives come from the curve itself; jumps stay as breaks.
 */
function integrationGrid(curve: EstimateCurve): { v: Float64Array; xh: Float64Array; slope: Float64Array; breakAfter: Uint8Array } {
  const cv = curve.v;
  const n = cv.length;
  const vs: number[] = [];
  const xs: number[] = [];
  const ss: number[] = [];
  const bs: number[] = [];
  for (let i = 0; i < n; i++) {
    vs.push(cv[i]);
    xs.push(curve.xh[i]);
    ss.push(curve.slope[i]);
    bs.push(curve.breakAfter[i]);
    if (i === n - 1 || curve.breakAfter[i]) continue;
    const a = cv[i];
    const b = cv[i + 1];
    for (let k = Math.floor(a / INTEGRATION_STEP) + 1; k * INTEGRATION_STEP < b; k++) {
      const u = k * INTEGRATION_STEP;
      if (u - a < 1e-9 || b - u < 1e-9) continue;
      vs.push(u);
      xs.push(curve.interpolate(i, u));
      ss.push(curve.derivative(i, u));
      bs.push(0);
    }
  }
  return { v: Float64Array.from(vs), xh: Float64Array.from(xs), slope: Float64Array.from(ss), breakAfter: Uint8Array.from(bs) };
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

/**
 * The per-trial likelihood split around the lapse rate λ:
 * p_t = (1 − λ)·core_t + λ·lapse_t, where core_t is the lapse-free density (or
 * censored end mass) and lapse_t the lapse density at the response (1/range
 * inside the scale, 0 at a censored end or outside). Nothing else depends on λ,
 * so a fit probing λ alone can reuse the terms (see src/fit/fitModel.ts).
 */
export interface LapseFreeTerms {
  core: Float64Array;
  lapse: Float64Array;
}

export function lapseFreeTerms(obs: Observer, data: Dataset): LapseFreeTerms {
  const models = responseModels(obs, data);
  const { scale } = obs;
  const range = scale.upper - scale.lower;
  const tol = 1e-9 * range;
  const n = data.stimulus.length;
  const core = new Float64Array(n);
  const lapse = new Float64Array(n);
  for (let t = 0; t < n; t++) {
    const m = models[data.condition[t]];
    const x = data.stimulus[t];
    const r = data.response[t];
    if (scale.ends === 'censor' && r <= scale.lower + tol) core[t] = m.integrate(x, scale.lower, 1);
    else if (scale.ends === 'censor' && r >= scale.upper - tol) core[t] = m.integrate(x, scale.upper, 2);
    else {
      core[t] = m.integrate(x, r, 0);
      lapse[t] = r >= scale.lower && r <= scale.upper ? 1 / range : 0;
    }
  }
  return { core, lapse };
}

/** Σ log p_t for the terms at lapse rate λ; every trial is floored at 1e-300 so the sum is always finite. */
export function logLikelihoodFromTerms(terms: LapseFreeTerms, lapseRate: number): number {
  const { core, lapse } = terms;
  let s = 0;
  for (let t = 0; t < core.length; t++) {
    const p = (1 - lapseRate) * core[t] + lapseRate * lapse[t];
    s += Math.log(p > TINY ? p : TINY);
  }
  return s;
}

/** Log-likelihood of a dataset; every trial is floored at 1e-300 so the sum is always finite. */
export function logLikelihood(obs: Observer, data: Dataset): number {
  return logLikelihoodFromTerms(lapseFreeTerms(obs, data), obs.lapseRate);
}

export { evaluateClosedForm };
