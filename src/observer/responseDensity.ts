/**
 * Response density p(r | x, θ) = (1−λ)·∫ N(r; x̂(m), σ_m²) p(m | x) dm + λ/range,
 * with point masses at the ends of a censored scale.
 *
 * The integral over m is the trapezoid rule on the condition's measurement
 * grid (measurementGrid.ts): nodes uniform in the warped measurement v, which
 * for a smooth bell-shaped integrand converges exponentially in the step
 * (Trefethen & Weideman, SIAM Review 56:385, 2014), split at jumps of x̂, with
 * sub-steps where a narrow motor kernel needs them and Euler–Maclaurin end
 * corrections (Abramowitz & Stegun 25.4.7) only where steps change. Everything
 * that does not depend on the trial lives in the grid, so a trial costs one
 * exp per node that matters.
 *
 * Which nodes matter: those within SENSORY_WINDOW sensory sds of the stimulus
 * whose combined exponent ½(z_m² + z²) is within CUT of the trial's smallest.
 * The cut is relative, so a response far from every estimate still gets its
 * (tiny) tail density rather than 0, and a node entering or leaving the sum
 * moves it by less than e^−CUT of itself (no visible steps in the likelihood).
 */
import { normCdf } from '../numerics/special.js';
import { expNeg } from '../numerics/expTable.js';
import { closedFormEstimate, evaluateClosedForm, type ClosedFormEstimate } from './closedForm.js';
import { EstimateCurve } from './estimateCurve.js';
import { MeasurementGrid, SENSORY_WINDOW } from './measurementGrid.js';
import type { Dataset, Observer } from './observer.js';
import type { SensoryNoise } from './noise/types.js';

/** Nodes whose exponent exceeds the trial's smallest by more than this are skipped (e^−27 ≈ 2e−12 of the peak); ≤ EXP_TABLE_MAX. */
const CUT = 27;
/** Beyond this many motor sds Φ is taken as exactly 0 or 1 (tail kernels of censored ends). */
const KERNEL_CUT = 9;
const TINY = 1e-300;
/** A window crossing more monotone runs of x̂ than this is scanned whole. */
const MAX_RUNS = 8;
const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);
const INV_2PI = 1 / (2 * Math.PI);
/** Shared empty scratch (replaced before anything is written). */
const EMPTY_F64 = new Float64Array(0);
const EMPTY_I32 = new Int32Array(0);

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
  readonly grid: MeasurementGrid | null;
  /** Per-trial scratch: the combined exponent at each node and sub-step point, and the sub-stepped segments in reach. */
  private exps: Float64Array<ArrayBufferLike> = EMPTY_F64;
  private subExps: Float64Array<ArrayBufferLike> = EMPTY_F64;
  private touched: Int32Array<ArrayBufferLike> = EMPTY_I32;
  /** Per-trial scratch: the node ranges [lo, hi] worth visiting. */
  private ranges = new Int32Array(2 * MAX_RUNS);

  /**
   * `curve`: an estimate curve already built for this observer and noise
   * (tests use it to hold x̂ fixed while the motor noise moves the quadrature).
   */
  constructor(readonly obs: Observer, readonly noise: SensoryNoise, xLo: number, xHi: number, curve?: EstimateCurve) {
    this.closed = closedFormEstimate(obs, noise);
    this.curve = this.closed && this.closed.kind === 'linear' ? null : (curve ?? new EstimateCurve(obs, noise, xLo, xHi));
    // A closed-form x̂ (log-normal prior, log-space noise) is evaluated exactly at every node: the
    // curve's Hermite pieces at its unrefined step missed it by up to 0.02 in the log-likelihood of
    // the log-linear case of test/likelihoodReference.test.ts.
    this.grid = this.curve ? new MeasurementGrid(this.curve, noise, xLo, xHi, obs.motorSd, this.closed) : null;
    if (this.grid) {
      this.exps = this.grid.scratch;
      if (this.grid.subLeft.length > 0) this.touched = new Int32Array(this.grid.subLeft.length);
    }
  }

  /** The stimulus's measurement centre and sd, and the nodes within SENSORY_WINDOW sds of it (fields, so a trial allocates nothing). */
  private winC = 0;
  private winSd = 1;
  private winK0 = 0;
  private winK1 = 0;
  private sensoryWindow(x: number): void {
    const g = this.grid!;
    const warp = this.curve!.warpM;
    const c = this.noise.center(x);
    const sd = this.noise.sdAt(x);
    this.winC = c;
    this.winSd = sd;
    this.winK0 = g.nodeBelow(warp.toU(c - SENSORY_WINDOW * sd));
    this.winK1 = Math.min(g.n - 1, g.nodeBelow(warp.toU(c + SENSORY_WINDOW * sd)) + 1);
  }

  /**
   * ∫ N(r; x̂(v), σ_m²) p(v | x) dv on the grid, with the relative cut of the
   * header. Which nodes can matter is found first: within each monotone run
   * of x̂ in the sensory window, the exponent at the nodes where x̂ crosses r
   * bounds the smallest exponent from above (e0), and every node whose motor
   * term alone exceeds e0 + CUT lies beyond two bisections on x̂. Only the
   * node ranges between are visited.
   */
  private integrateDensity(x: number, r: number): number {
    const g = this.grid!;
    const { m: M, xh: X } = g;
    const sm = this.obs.motorSd;
    this.sensoryWindow(x);
    const { winC: c, winK0: k0, winK1: k1 } = this;
    const invSm = 1 / sm;
    const invSd = 1 / this.winSd;
    const run0 = g.runOf(k0);
    const run1 = g.runOf(k1);
    if (run0 === run1 && g.irregular[k1 + 1] === g.irregular[k0]) return this.walkDensity(x, r, invSd, invSm, run0);
    const ranges = this.ranges;
    let nr = 0;
    if (run1 - run0 < MAX_RUNS) {
      let e0 = Infinity;
      for (let q = run0; q <= run1; q++) {
        const a = Math.max(k0, g.runStart[q]);
        const b = Math.min(k1, g.runStart[q + 1]);
        const kc = g.crossing(r, a, b + 1, g.runUp[q] === 1);
        for (let k = kc - 1; k <= kc; k++) {
          if (k < a || k > b) continue;
          const zm = (M[k] - c) * invSd;
          const z = (r - X[k]) * invSm;
          const e = 0.5 * (zm * zm + z * z);
          if (e < e0) e0 = e;
        }
      }
      const reach = Math.sqrt(2 * (e0 + CUT)) * sm;
      for (let q = run0; q <= run1; q++) {
        const a = Math.max(k0, g.runStart[q]);
        const b = Math.min(k1, g.runStart[q + 1]);
        const up = g.runUp[q] === 1;
        // One node of margin each side, for sub-stepped segments that straddle the edge.
        const lo = Math.max(a, g.crossing(up ? r - reach : r + reach, a, b + 1, up) - 1);
        const hi = Math.min(b, g.crossing(up ? r + reach : r - reach, a, b + 1, up));
        if (lo > hi) continue;
        if (nr > 0 && lo <= ranges[nr - 1] + 1) ranges[nr - 1] = Math.max(ranges[nr - 1], hi);
        else {
          ranges[nr++] = lo;
          ranges[nr++] = hi;
        }
      }
    } else {
      ranges[nr++] = k0;
      ranges[nr++] = k1;
    }
    if (nr === 0) return 0;
    if (nr === 2 && g.irregular[ranges[1] + 1] === g.irregular[ranges[0]]) return this.uniformDensity(c, r, invSd, invSm, ranges[0], ranges[1]);
    return this.generalDensity(c, r, invSd, invSm, nr);
  }

  /** The density on node ranges this.ranges[0 … nr): sub-steps and Euler–Maclaurin corrections included. */
  private generalDensity(c: number, r: number, invSd: number, invSm: number, nr: number): number {
    const g = this.grid!;
    const { m: M, xh: X, weight: W, emc } = g;
    const E = this.exps;
    const ranges = this.ranges;
    let emin = Infinity;
    for (let q = 0; q < nr; q += 2) {
      for (let k = ranges[q], e = ranges[q + 1]; k <= e; k++) {
        const zm = (M[k] - c) * invSd;
        const z = (r - X[k]) * invSm;
        const ek = 0.5 * (zm * zm + z * z);
        E[k] = ek;
        if (ek < emin) emin = ek;
      }
    }
    // Sub-stepped segments (narrow motor kernels): a narrow peak can hide between nodes, so each
    // segment whose lower bound on the exponent is within the cut has its points' exponents computed.
    let nTouched = 0;
    const nSub = g.subLeft.length;
    if (nSub > 0) {
      for (let q = 0; q < nr; q += 2) {
        const lo = ranges[q];
        const hi = ranges[q + 1];
        for (let t = g.firstSubAtOrAfter(lo); t < nSub && g.subLeft[t] < hi; t++) {
          if (g.subRight[t] > hi || this.subBound(t, c, invSd, r, invSm) > emin + CUT) continue;
          g.buildSubRule(t);
          if (this.subExps.length < g.subM.length) {
            const grown = new Float64Array(g.subM.length);
            grown.set(this.subExps);
            this.subExps = grown;
          }
          const sE = this.subExps;
          const sM = g.subM;
          const sX = g.subX;
          for (let s = g.subFrom[t], e = g.subTo[t]; s < e; s++) {
            const zm = (sM[s] - c) * invSd;
            const z = (r - sX[s]) * invSm;
            const e2 = 0.5 * (zm * zm + z * z);
            sE[s] = e2;
            if (e2 < emin) emin = e2;
          }
          this.touched[nTouched++] = t;
        }
      }
    }
    const lim = emin + CUT;
    let sum = 0;
    for (let q = 0; q < nr; q += 2) {
      for (let k = ranges[q], e = ranges[q + 1]; k <= e; k++) {
        const ek = E[k];
        if (ek > lim) continue;
        const t = expNeg(ek - emin);
        sum += W[k] * t;
        const ck = emc[k];
        if (ck !== 0) {
          // g′ = g·d/dv log g, with g = t·dm/dv.
          const zm = (M[k] - c) * invSd;
          const z = (r - X[k]) * invSm;
          const J = g.jac[k];
          sum += ck * t * J * (-zm * J * invSd + g.curv[k] + z * invSm * g.slope[k]);
        }
      }
    }
    for (let t = 0; t < nTouched; t++) {
      const k = this.touched[t];
      const sE = this.subExps;
      const sW = g.subW;
      for (let s = g.subFrom[k], e = g.subTo[k]; s < e; s++) if (sE[s] <= lim) sum += sW[s] * expNeg(sE[s] - emin);
    }
    return sum * Math.exp(-emin) * invSd * invSm * INV_2PI;
  }

  /**
   * The common case: nodes k0…k1 all inside one piece, no sub-steps and no
   * step changes, so the plain trapezoid rule without end corrections.
   *
   * (Tried and dropped: letting each trial use every 2nd or 4th node where
   * its own window allows. Up to 30% faster on the bench, but the choice is
   * discrete per trial and moved single trials' log densities by up to 1e−5
   * along a sweep of σ_m, against 3e−8 with the one lattice.)
   */
  private uniformDensity(c: number, r: number, invSd: number, invSm: number, k0: number, k1: number): number {
    const g = this.grid!;
    const { m: M, xh: X, weight: W } = g;
    const E = this.exps;
    const emin = this.exponents(c, r, invSd, invSm, k0, k1);
    const lim = emin + CUT;
    let sum = 0;
    for (let k = k0; k <= k1; k++) {
      const e = E[k];
      if (e <= lim) sum += W[k] * expNeg(e - emin);
    }
    return sum * Math.exp(-emin) * invSd * invSm * INV_2PI;
  }

  /** Each node's exponent ½(z_m² + z²) for nodes k0…k1, stored in exps; returns the smallest. */
  private exponents(c: number, r: number, invSd: number, invSm: number, k0: number, k1: number): number {
    const { m: M, xh: X } = this.grid!;
    const E = this.exps;
    let emin = Infinity;
    for (let k = k0; k <= k1; k++) {
      const zm = (M[k] - c) * invSd;
      const z = (r - X[k]) * invSm;
      const e = 0.5 * (zm * zm + z * z);
      E[k] = e;
      if (e < emin) emin = e;
    }
    return emin;
  }

  /**
   * The usual trial: one monotone run of x̂ and the plain uniform rule over the
   * whole sensory window [winK0, winK1]. Outside the nodes between the
   * sensory centre and the crossing of r (both included), each term of the
   * exponent only grows away from them (m moves away from its centre, x̂ away
   * from r), so the smallest exponent lies between, and walking outwards each
   * side can stop at the first node beyond the cut: it and every node past it
   * are cut. The nodes summed are exactly those of the window within the cut,
   * the same set as integrateDensity's bisection bounds give, in another order
   * (the middle, then outwards each way), so the value is uniformDensity's up
   * to rounding. Where every node has the same weight (a linear warp) the
   * weight multiplies the sum once instead of each term.
   */
  private walkDensity(x: number, r: number, invSd: number, invSm: number, run: number): number {
    const g = this.grid!;
    const { m: M, xh: X, weight: W } = g;
    const E = this.exps;
    const { winC: c, winK0: k0, winK1: k1 } = this;
    const up = g.runUp[run] === 1;
    // The last node with m at or below c, and the first node with x̂ at or past r (as
    // g.crossing defines it), each by walking: both are usually a few nodes from the
    // window's middle, where a bisection over the window took as long as the sum.
    let ks = (k0 + k1) >> 1;
    while (ks > k0 && M[ks] > c) ks--;
    while (ks < k1 && M[ks + 1] <= c) ks++;
    let kc = ks;
    if (up ? X[kc] < r : X[kc] > r) {
      do kc++;
      while (kc <= k1 && (up ? X[kc] < r : X[kc] > r));
    } else {
      while (kc > k0 && !(up ? X[kc - 1] < r : X[kc - 1] > r)) kc--;
    }
    const lo = Math.max(k0, Math.min(kc - 1, ks));
    const hi = Math.min(k1, Math.max(kc, ks + 1));
    const emin = this.exponents(c, r, invSd, invSm, lo, hi);
    const lim = emin + CUT;
    let sum = 0;
    const wc = g.regularWeight;
    if (wc === wc) {
      // Every node here has the same weight (a linear warp): it multiplies the sum once.
      for (let k = lo; k <= hi; k++) {
        const e = E[k];
        if (e <= lim) sum += expNeg(e - emin);
      }
      for (let k = lo - 1; k >= k0; k--) {
        const zm = (M[k] - c) * invSd;
        const z = (r - X[k]) * invSm;
        const e = 0.5 * (zm * zm + z * z);
        if (e > lim) break;
        sum += expNeg(e - emin);
      }
      for (let k = hi + 1; k <= k1; k++) {
        const zm = (M[k] - c) * invSd;
        const z = (r - X[k]) * invSm;
        const e = 0.5 * (zm * zm + z * z);
        if (e > lim) break;
        sum += expNeg(e - emin);
      }
      return wc * sum * Math.exp(-emin) * invSd * invSm * INV_2PI;
    }
    // The same three loops with a weight per node. Kept apart on purpose: merging them into one
    // set with a per-node choice of weight, together with the same merge of the posterior's
    // constant-noise loops (gridPosterior.ts), cost 3–15% of an evaluation (measured together).
    for (let k = lo; k <= hi; k++) {
      const e = E[k];
      if (e <= lim) sum += W[k] * expNeg(e - emin);
    }
    for (let k = lo - 1; k >= k0; k--) {
      const zm = (M[k] - c) * invSd;
      const z = (r - X[k]) * invSm;
      const e = 0.5 * (zm * zm + z * z);
      if (e > lim) break;
      sum += W[k] * expNeg(e - emin);
    }
    for (let k = hi + 1; k <= k1; k++) {
      const zm = (M[k] - c) * invSd;
      const z = (r - X[k]) * invSm;
      const e = 0.5 * (zm * zm + z * z);
      if (e > lim) break;
      sum += W[k] * expNeg(e - emin);
    }
    return sum * Math.exp(-emin) * invSd * invSm * INV_2PI;
  }

  /** A lower bound on ½(z_m² + z²) over sub-stepped segment t (m is monotone in v; x̂ stays within subLo…subHi). */
  private subBound(t: number, c: number, invSd: number, r: number, invSm: number): number {
    const g = this.grid!;
    const a = (g.m[g.subLeft[t]] - c) * invSd;
    const b = (g.m[g.subRight[t]] - c) * invSd;
    const zm = a > 0 ? a : b < 0 ? -b : 0;
    const lo = g.subLo[t];
    const hi = g.subHi[t];
    const z = r < lo ? (lo - r) * invSm : r > hi ? (r - hi) * invSm : 0;
    return 0.5 * (zm * zm + z * z);
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
    return this.integrateTail(x, r, kernel);
  }

  /**
   * P(response ≤ r) (kernel 1) or P(response ≥ r) (kernel 2) before lapses: the
   * same rule with Φ(±z) for the motor factor. Censored trials are few, so this
   * keeps the simple fixed cuts (Φ is exactly 0 or 1 beyond KERNEL_CUT).
   */
  private integrateTail(x: number, r: number, kernel: TailKernel): number {
    const g = this.grid!;
    const { m: M, xh: X, weight: W, emc } = g;
    const sm = this.obs.motorSd;
    this.sensoryWindow(x);
    const { winC: c, winSd: sd, winK0: k0, winK1: k1 } = this;
    const invSm = 1 / sm;
    const invSd = 1 / sd;
    const sign = kernel === 1 ? -1 : 1;
    let sum = 0;
    for (let k = k0; k <= k1; k++) {
      const zm = (M[k] - c) * invSd;
      const z = (r - X[k]) * invSm;
      const K = tailKernel(kernel, z);
      const p = Math.exp(-0.5 * zm * zm);
      sum += W[k] * p * K;
      const ck = emc[k];
      if (ck !== 0) {
        const J = g.jac[k];
        const phi = z <= KERNEL_CUT && z >= -KERNEL_CUT ? Math.exp(-0.5 * z * z) * INV_SQRT_2PI : 0;
        sum += ck * p * J * ((-zm * J * invSd + g.curv[k]) * K + sign * phi * invSm * g.slope[k]);
      }
    }
    const reach = KERNEL_CUT * sm;
    for (let t = g.firstSubAtOrAfter(k0); t < g.subLeft.length && g.subLeft[t] < k1; t++) {
      // Beyond the cut Φ is 0 over the whole segment.
      if (g.subRight[t] > k1 || (kernel === 1 ? g.subLo[t] > r + reach : g.subHi[t] < r - reach)) continue;
      g.buildSubRule(t);
      const { subM: sM, subX: sX, subW: sW } = g;
      for (let s = g.subFrom[t], e = g.subTo[t]; s < e; s++) {
        const zm = (sM[s] - c) * invSd;
        sum += sW[s] * Math.exp(-0.5 * zm * zm) * tailKernel(kernel, (r - sX[s]) * invSm);
      }
    }
    return sum * invSd * INV_SQRT_2PI;
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

/**
 * Per-condition response models covering the stimuli of a dataset; `curves`
 * (per condition) supplies estimate curves already built for this observer
 * and noise, as in the ConditionResponse constructor.
 */
export function responseModels(obs: Observer, data: Dataset, curves?: readonly (EstimateCurve | null)[]): ConditionResponse[] {
  const nCond = obs.noise.length;
  const lo = new Array(nCond).fill(Infinity);
  const hi = new Array(nCond).fill(-Infinity);
  for (let t = 0; t < data.stimulus.length; t++) {
    const c = data.condition[t];
    const x = data.stimulus[t];
    if (x < lo[c]) lo[c] = x;
    if (x > hi[c]) hi[c] = x;
  }
  return obs.noise.map((noise, c) => (Number.isFinite(lo[c]) ? new ConditionResponse(obs, noise, lo[c], hi[c], curves?.[c] ?? undefined) : (null as unknown as ConditionResponse)));
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
  /** Each condition's estimate curve (null: closed form, or no trials), for a caller that may reuse it. */
  curves: (EstimateCurve | null)[];
}

export function lapseFreeTerms(obs: Observer, data: Dataset, curves?: readonly (EstimateCurve | null)[]): LapseFreeTerms {
  const models = responseModels(obs, data, curves);
  const { scale } = obs;
  const range = scale.upper - scale.lower;
  const tol = 1e-9 * range;
  const n = data.stimulus.length;
  // One buffer for both (an allocation per typed array of this size).
  const both = new Float64Array(2 * n);
  const core = both.subarray(0, n);
  const lapse = both.subarray(n);
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
  return { core, lapse, curves: models.map((m) => (m ? m.curve : null)) };
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
