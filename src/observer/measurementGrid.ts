/**
 * The quadrature grid over the measurement for one condition's response
 * density: nodes UNIFORM in the warped measurement v (noise sds), with x̂ and
 * its slope at each node taken from the estimate curve's Hermite pieces.
 *
 * Why uniform: the integrand N(r; x̂(v), σ_m²)·p(v | x) is a smooth bell in v,
 * and the trapezoid rule with a uniform step on a smooth, fast-decaying
 * integrand converges exponentially (for a Gaussian of width w the relative
 * error is ≈ 2·exp(−2π²(w/h)²); Trefethen & Weideman, "The exponentially
 * convergent trapezoidal rule", SIAM Review 56:385, 2014), with no end
 * corrections because the integrand vanishes at both ends of the window.
 *
 * The step: the ideal one moves x̂ by STEP_MOTION motor sds at its steepest
 * near the design's stimuli (at most H_MAX sensory sds, H_MAX_AT_JUMPS where
 * x̂ jumps, at least H_MIN); the step used is the power of 2 at or below it,
 * so the nodes sit on a lattice fixed in v, as do the curve's own nodes
 * (CURVE_STEP halved by refinement). Then the curve's C¹ joins fall on nodes,
 * and the rule's small remaining error changes smoothly with the parameters
 * instead of wandering as a continuously varying step slides the nodes over
 * the joins (measured: with a continuous step, 1e−6 jumps and 1e−4 wiggles in
 * the log-likelihood along a σ_m sweep). Near a power of 2 the rules of that
 * step and its half are blended (BAND), so the likelihood stays continuous
 * where the lattice changes.
 *
 * Two things break uniformity:
 *  - jumps of x̂ (breakAfter on the curve): the curve's pieces between breaks
 *    are integrated separately; the curve puts each jump at a zero-width break
 *    (estimateCurve.ts, closeGaps), so the pieces meet and no measurement is
 *    left out;
 *  - segments where x̂ still moves more than SUBSTEP motor sds (the step
 *    clamped at H_MIN: motor noise small against slope × sensory noise, trap 1
 *    of issue #2) get uniform sub-steps, the count blended smoothly between
 *    ⌊q⌋ and ⌊q⌋+1 so the likelihood has no steps as parameters move it.
 * Where neighbouring steps differ, the composite rule carries the
 * Euler–Maclaurin end correction −d²/12·(g′(b) − g′(a)) of each segment
 * (Abramowitz & Stegun 25.4.7); summed over segments it becomes one
 * coefficient per node, (d²_right − d²_left)/12, which is zero wherever the
 * grid is uniform, so only the few nodes next to a jump or a sub-stepped
 * segment pay for g′.
 *
 * For the trials, the grid also records the monotone runs of x̂ (to find the
 * nodes near a response by bisection) and which nodes are irregular (piece
 * ends, corrections, sub-steps), so a trial far from all of them takes a
 * plain loop.
 */
import { hermite, hermiteDerivative, type EstimateCurve } from './estimateCurve.js';
import type { SensoryNoise } from './noise/types.js';
import { segmentIndex } from '../numerics/search.js';
import { evaluateClosedForm, type ClosedFormEstimate } from './closedForm.js';

/**
 * At the steepest x̂ within reach of the design, one step moves x̂ by at most
 * this many motor sds: the motor kernel alone sampled every σ_m has trapezoid
 * error 2·e^{−2π²} ≈ 5e−9 (measured on the bench data: per-trial log density
 * within 1.6e−7 rms of the independent reference; at 1.5 σ_m per step, 1e−4).
 */
const STEP_MOTION = 1;
/** Never coarser than this many sensory sds (the sensory factor alone then has error ≈ 3e−24). */
const H_MAX = 0.6;
/**
 * At a jump of x̂ the integrand is cut mid-bell, and the composite rule's
 * error there is the next Euler–Maclaurin term, d⁴/720·g‴: steps near a jump
 * are kept to a quarter sd (0.3 lands on the 1/4 lattice outside the blending
 * band; measured: a half-sd step missed normalisation by
 * 1.2e−5 on the bimodal hit-or-miss case of test/responseDensity.test.ts).
 */
const H_MAX_AT_JUMPS = 0.3;
/** Never finer than this (noise sds; a power of 2): narrower motor kernels get sub-steps instead. */
const H_MIN = 1 / 32;
/** Width, in log2 of the step, of the band where the rules of two neighbouring steps are blended. */
const BAND = 0.2;
/** Sub-step a segment where x̂ moves more than this many motor sds across it. */
const SUBSTEP = 1;
const MAX_SUB = 4000;
/** Measurements beyond this many sensory sds of the stimulus are never integrated over. */
export const SENSORY_WINDOW = 8.5;
/**
 * The steepest x̂ is sought within this many sensory sds of the design's
 * stimuli: beyond it the sensory factor is below e^−12.5 ≈ 4e−6 of its peak,
 * so a coarser rule there costs nothing measurable, while x̂ often steepens
 * fast outside the data (log-normal priors: exponentially), which would
 * otherwise set a needlessly fine step.
 */
const SLOPE_WINDOW = 5;

/** Shared empty arrays (nothing can be written to them). */
const EMPTY_F64 = new Float64Array(0);
const EMPTY_I32 = new Int32Array(0);

export class MeasurementGrid {
  /** The lattice step of the nodes (the finer rule's step while two are blended). */
  readonly step: number;
  /** Nodes exactly v[0] + k·step (one piece, no breaks), so a node's index is arithmetic. */
  private readonly uniform: boolean;
  readonly n: number;
  readonly v: Float64Array;
  /** Measurement m(v), dm/dv and (d²m/dv²)/(dm/dv) at each node. */
  readonly m: Float64Array;
  readonly jac: Float64Array;
  readonly curv: Float64Array;
  readonly xh: Float64Array;
  readonly slope: Float64Array;
  /** The node's weight in the (blended) rule over v, times dm/dv. */
  readonly weight: Float64Array;
  /** Σ_k emc[k]·g′(v_k) is the Euler–Maclaurin correction of the whole rule; 0 wherever the grid is uniform. */
  readonly emc: Float64Array;
  /**
   * Monotone runs of x̂: run i covers nodes runStart[i] … runStart[i+1]
   * (the turning node belongs to both), rising where runUp[i] = 1. Within a
   * run, the nodes near a response are found by bisection on x̂.
   */
  readonly runStart: Int32Array;
  readonly runUp: Uint8Array;
  /**
   * Nodes where the plain uniform rule does not hold (piece ends, a nonzero
   * Euler–Maclaurin coefficient, a sub-stepped segment, a blended grid),
   * counted as a prefix sum: [a, b] is regular iff irregular[b + 1] = irregular[a].
   */
  readonly irregular: Int32Array;
  /** The weight every regular node has (a linear warp: the step times dx/du), NaN where they differ. */
  readonly regularWeight: number;
  /** Per-node scratch space for a trial's exponents (shares the grid's store). */
  readonly scratch: Float64Array;
  /** Sub-stepped segments, sorted by left node: nodes, x̂ range, points subFrom[s] … subTo[s] − 1 (subFrom = −1 until built). */
  readonly subLeft: Int32Array;
  readonly subRight: Int32Array;
  readonly subLo: Float64Array;
  readonly subHi: Float64Array;
  readonly subFrom: Int32Array;
  readonly subTo: Int32Array;
  subM = EMPTY_F64;
  subX = EMPTY_F64;
  /** Rule weight × dm/dv of each sub-step point. */
  subW = EMPTY_F64;
  private subCount = 0;
  private readonly subQ: Float64Array;
  private readonly subShare: Float64Array;
  /** Curve segment holding node k (for evaluating x̂ between nodes). */
  private readonly curveSeg: Int32Array;

  constructor(
    private readonly curve: EstimateCurve,
    noise: SensoryNoise,
    xLo: number,
    xHi: number,
    motorSd: number,
    /** x̂ in closed form (log-normal prior with log-space noise): used at every node instead of the curve's interpolant. */
    private readonly exact: ClosedFormEstimate | null = null,
  ) {
    const { coarse, fineShare } = chooseStep(curve, noise, xLo, xHi, motorSd);
    const h = fineShare > 0 ? coarse / 2 : coarse;
    this.step = h;
    const { v: cv, xh: cx, slope: cs, breakAfter } = curve;
    const nc = cv.length;
    const eps = 1e-9 * h;

    // Pieces between jumps. The curve's breaks have zero width (closeGaps), so neighbouring
    // pieces meet and no measurement is left out. A piece of one node (a curve of a single
    // node) holds its x̂.
    const pieceFrom: number[] = [];
    const pieceTo: number[] = [];
    let cap = 0;
    for (let p0 = 0; p0 < nc; ) {
      let p1 = p0;
      while (p1 < nc - 1 && !breakAfter[p1]) p1++;
      pieceFrom.push(p0);
      pieceTo.push(p1);
      const a = cv[p0];
      const b = cv[p1];
      cap += Math.floor((b - a) / h) + 3;
      p0 = p1 + 1;
    }
    // One backing store for every per-node array (views into it): a grid is rebuilt on every
    // evaluation, and a dozen separate typed arrays cost more in allocation and collection than
    // the arithmetic that fills them (measured).
    const buffer = new ArrayBuffer(8 * 10 * cap + 4 * (2 * cap + 1));
    const store = new Float64Array(buffer, 0, 10 * cap);
    const view = (i: number) => store.subarray(i * cap, (i + 1) * cap);
    const v = view(0);
    const xh = view(1);
    const slope = view(2);
    const lattice = view(3);
    const ints = new Int32Array(buffer, 8 * 10 * cap, 2 * cap + 1);
    const curveSeg = ints.subarray(0, cap);
    const pieceFirst = new Int32Array(pieceFrom.length);
    const pieceLast = new Int32Array(pieceFrom.length);
    let n = 0;
    for (let q = 0; q < pieceFrom.length; q++) {
      const p0 = pieceFrom[q];
      const p1 = pieceTo[q];
      const a = cv[p0];
      const b = cv[p1];
      pieceFirst[q] = n;
      if (p1 === p0) {
        for (let e = 0; e < (b > a ? 2 : 1); e++) {
          v[n] = e === 0 ? a : b;
          xh[n] = cx[p0];
          slope[n] = 0;
          curveSeg[n] = -1;
          lattice[n] = NaN;
          n++;
        }
        pieceLast[q] = n - 1;
        continue;
      }
      // The piece's two ends and the lattice points k·h strictly inside.
      let j = p0;
      for (let k = Math.floor(a / h); ; k++) {
        const end = k * h >= b - eps;
        const u = k < Math.floor(a / h) + 1 ? a : end ? b : k * h;
        if (u !== a && u !== b && u - a < eps) continue;
        while (j < p1 - 1 && cv[j + 1] <= u) j++;
        v[n] = u;
        if (exact) {
          const mu = curve.warpM.fromU(u);
          xh[n] = evaluateClosedForm(exact, mu);
          // d x̂/dv = d x̂/dm · dm/dv (x̂ = a + b·m or exp(a + b·m))
          slope[n] = (exact.kind === 'linear' ? exact.slope : exact.slope * xh[n]) * curve.warpM.dxdu(u);
        } else {
          xh[n] = hermite(cv, cx, cs, j, u);
          slope[n] = hermiteDerivative(cv, cx, cs, j, u);
        }
        curveSeg[n] = j;
        lattice[n] = u === a || u === b ? NaN : k;
        n++;
        if (end) break;
      }
      pieceLast[q] = n - 1;
    }
    this.n = n;
    this.v = v.subarray(0, n);
    this.xh = xh.subarray(0, n);
    this.slope = slope.subarray(0, n);
    this.curveSeg = curveSeg.subarray(0, n);
    const warp = curve.warpM;
    const m = view(4).subarray(0, n);
    const jac = view(5).subarray(0, n);
    const curv = view(6).subarray(0, n);
    for (let k = 0; k < n; k++) {
      const u = v[k];
      m[k] = warp.fromU(u);
      jac[k] = warp.dxdu(u);
      curv[k] = warp.curvature(u);
    }
    this.m = m;
    this.jac = jac;
    this.curv = curv;

    // The rule(s): trapezoid over each piece on the rule's nodes, sub-stepped where x̂ moves
    // more than SUBSTEP motor sds. While two steps are blended, the coarse rule uses the piece
    // ends and every other lattice point, the fine rule every node.
    const weight = view(7).subarray(0, n);
    const emc = view(8).subarray(0, n);
    const subs: number[] = []; // left, right, q, share, lo, hi per sub-stepped segment
    for (let rule = 0; rule < 2; rule++) {
      const share = rule === 0 ? 1 - fineShare : fineShare;
      if (!(share > 0)) continue;
      const everyOther = rule === 0 && fineShare > 0;
      for (let q = 0; q < pieceFirst.length; q++) {
        const last = pieceLast[q];
        let i = pieceFirst[q];
        while (i < last) {
          let i2 = i + 1;
          if (everyOther) while (i2 < last && lattice[i2] % 2 !== 0) i2++;
          const d = v[i2] - v[i];
          if (d > 0) {
            // x̂ range over the segment: the values at its nodes, the curve nodes inside, and how
            // far each cubic piece it overlaps can bend off its chord (curveSeg −1: a one-node
            // piece's constant).
            let sLo = Infinity;
            let sHi = -Infinity;
            for (let k = i; k <= i2; k++) {
              if (xh[k] < sLo) sLo = xh[k];
              if (xh[k] > sHi) sHi = xh[k];
            }
            let bulge = 0;
            const j0 = curveSeg[i];
            for (let j = j0; j >= 0 && j <= curveSeg[i2] && j < nc - 1; j++) {
              if (j > j0 && cv[j] < v[i2]) {
                if (cx[j] < sLo) sLo = cx[j];
                if (cx[j] > sHi) sHi = cx[j];
              }
              const bend = 0.25 * (cv[j + 1] - cv[j]) * Math.abs(cs[j] - cs[j + 1]);
              if (bend > bulge) bulge = bend;
            }
            sLo -= bulge;
            sHi += bulge;
            const qs = (sHi - sLo) / (SUBSTEP * motorSd);
            let end = d;
            let em = (d * d) / 12;
            if (qs > 1) {
              const n0 = blendCount(qs);
              const w = blendWeight(qs, n0);
              end = (1 - w) * (d / n0) + w * (d / (n0 + 1));
              em = ((1 - w) * (d / n0) ** 2 + w * (d / (n0 + 1)) ** 2) / 12;
              subs.push(i, i2, qs, share, sLo, sHi);
            }
            weight[i] += 0.5 * share * end;
            weight[i2] += 0.5 * share * end;
            emc[i] += share * em;
            emc[i2] -= share * em;
          }
          i = i2;
        }
      }
    }
    const tiny = 1e-9 * h * h;
    for (let k = 0; k < n; k++) {
      weight[k] *= jac[k];
      // Equal neighbouring steps differ by rounding only: keep those nodes free of g′.
      if (Math.abs(emc[k]) <= tiny) emc[k] = 0;
    }
    this.weight = weight;
    this.emc = emc;
    this.scratch = view(9);

    // Sub-stepped segments sorted by left node (the two rules' lists interleave).
    // (Most grids have none: they share empty arrays, which cost an allocation each otherwise.)
    const ns = subs.length / 6;
    const order = ns > 0 ? new Int32Array(ns) : EMPTY_I32;
    for (let t = 0; t < ns; t++) order[t] = t;
    if (fineShare > 0 && fineShare < 1) order.sort((a, b) => subs[6 * a] - subs[6 * b]);
    this.subLeft = ns > 0 ? new Int32Array(ns) : EMPTY_I32;
    this.subRight = ns > 0 ? new Int32Array(ns) : EMPTY_I32;
    this.subQ = ns > 0 ? new Float64Array(ns) : EMPTY_F64;
    this.subShare = ns > 0 ? new Float64Array(ns) : EMPTY_F64;
    this.subLo = ns > 0 ? new Float64Array(ns) : EMPTY_F64;
    this.subHi = ns > 0 ? new Float64Array(ns) : EMPTY_F64;
    for (let t = 0; t < ns; t++) {
      const o = 6 * order[t];
      this.subLeft[t] = subs[o];
      this.subRight[t] = subs[o + 1];
      this.subQ[t] = subs[o + 2];
      this.subShare[t] = subs[o + 3];
      this.subLo[t] = subs[o + 4];
      this.subHi[t] = subs[o + 5];
    }
    this.subFrom = ns > 0 ? new Int32Array(ns).fill(-1) : EMPTY_I32;
    this.subTo = ns > 0 ? new Int32Array(ns) : EMPTY_I32;

    // What a trial needs to choose its path: monotone runs of x̂ and the irregular nodes.
    const starts = [0];
    const ups = [n > 1 && xh[1] < xh[0] ? 0 : 1];
    for (let k = 1; k + 1 < n; k++) {
      const up = xh[k + 1] >= xh[k] ? 1 : 0;
      if (up !== ups[ups.length - 1]) {
        starts.push(k);
        ups.push(up);
      }
    }
    starts.push(Math.max(0, n - 1));
    this.runStart = Int32Array.from(starts);
    this.runUp = Uint8Array.from(ups);
    // Marks first (irregular[k + 1] = 1 for an irregular node k), then the prefix sum in place.
    const irr = ints.subarray(cap, cap + n + 1);
    for (let k = 0; k < n; k++) irr[k + 1] = fineShare > 0 || lattice[k] !== lattice[k] || emc[k] !== 0 ? 1 : 0;
    for (let t = 0; t < ns; t++) for (let k = this.subLeft[t]; k <= this.subRight[t]; k++) irr[k + 1] = 1;
    let rw = NaN;
    let same = true;
    for (let k = 0; k < n && same; k++) {
      if (irr[k + 1] !== 0) continue;
      if (rw !== rw) rw = weight[k];
      else same = weight[k] === rw;
    }
    this.regularWeight = same ? rw : NaN;
    for (let k = 0; k < n; k++) irr[k + 1] += irr[k];
    this.irregular = irr;
    let uniform = n > 1;
    for (let k = 1; k < n && uniform; k++) uniform = v[k] === v[0] + k * h;
    this.uniform = uniform;
  }

  /** First node of the segment holding v (clamped): by the lattice arithmetic on a uniform grid, else by bisection. */
  nodeBelow(v: number): number {
    const a = this.v;
    let lo = 0;
    let hi = this.n - 1;
    if (!(v > a[0])) return 0;
    if (v >= a[hi]) return hi;
    if (this.uniform) {
      // The guess can be off by one where v is within rounding of a node; the
      // checks make it the same segment bisection finds.
      let k = Math.floor((v - a[0]) / this.step);
      if (k > hi - 1) k = hi - 1;
      if (k < 0) k = 0;
      while (k > 0 && a[k] > v) k--;
      while (k < hi - 1 && a[k + 1] <= v) k++;
      return k;
    }
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (a[mid] <= v) lo = mid;
      else hi = mid;
    }
    return lo;
  }

  /** The run holding node k (the later one at a turning node). */
  runOf(k: number): number {
    const a = this.runStart;
    let lo = 0;
    let hi = a.length - 2;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (a[mid] <= k) lo = mid;
      else hi = mid - 1;
    }
    return lo;
  }

  /** First node in [lo, hi) past which x̂ has passed t along the run (x̂ ≥ t rising, x̂ ≤ t falling); hi if none. */
  crossing(t: number, lo: number, hi: number, up: boolean): number {
    const a = this.xh;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (up ? a[mid] < t : a[mid] > t) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  /** First sub-stepped segment whose left node is ≥ k. */
  firstSubAtOrAfter(k: number): number {
    const a = this.subLeft;
    let lo = 0;
    let hi = a.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (a[mid] < k) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  /** Builds the points of sub-stepped segment s (once). */
  buildSubRule(s: number): void {
    if (this.subFrom[s] >= 0) return;
    const { curve } = this;
    const { v: cv, xh: cx, slope: cs } = curve;
    const warp = curve.warpM;
    const n0 = blendCount(this.subQ[s]);
    const w = blendWeight(this.subQ[s], n0);
    const share = this.subShare[s];
    const left = this.subLeft[s];
    const right = this.subRight[s];
    const a = this.v[left];
    const d0 = this.v[right] - a;
    const need = this.subCount + 2 * n0;
    if (need > this.subM.length) {
      const cap = Math.max(need, 2 * this.subM.length, 256);
      const grow = (old: Float64Array) => {
        const b = new Float64Array(cap);
        b.set(old.subarray(0, this.subCount));
        return b;
      };
      this.subM = grow(this.subM);
      this.subX = grow(this.subX);
      this.subW = grow(this.subW);
    }
    this.subFrom[s] = this.subCount;
    const last = this.curveSeg[right];
    for (const [count, weight] of w > 0 ? [[n0, 1 - w], [n0 + 1, w]] : [[n0, 1]]) {
      const d = d0 / count;
      let j = this.curveSeg[left];
      for (let t = 1; t < count; t++) {
        const u = a + t * d;
        while (j < last && cv[j + 1] <= u) j++;
        const i = this.subCount++;
        this.subM[i] = warp.fromU(u);
        this.subX[i] = this.exact ? evaluateClosedForm(this.exact, this.subM[i]) : hermite(cv, cx, cs, j, u);
        this.subW[i] = share * weight * d * warp.dxdu(u);
      }
    }
    this.subTo[s] = this.subCount;
  }
}

/** ⌊q⌋ sub-steps, blended with ⌊q⌋+1 by a smoothstep weight of the fraction, so the rule moves continuously with q. */
function blendCount(q: number): number {
  return Math.min(MAX_SUB, Math.floor(q));
}

function blendWeight(q: number, n0: number): number {
  const frac = n0 === MAX_SUB ? 0 : q - n0;
  return frac * frac * (3 - 2 * frac);
}

/**
 * The step: the ideal one moves x̂ by STEP_MOTION motor sds at its steepest
 * within reach of the design's stimuli, gives the sensory factor at least
 * 1/H_MAX nodes per sd (fewer than 1 per unit of v only for scalar noise below
 * the warp's floor), and is no finer than H_MIN. The step used is the power of
 * 2 at or below it, so the nodes sit on a lattice fixed in v — as do the
 * estimate curve's own nodes (CURVE_STEP halved by refinement), whose C¹ joins
 * then fall on nodes, and the rule's error does not wander as parameters move
 * the step. Where the ideal step lies within BAND (in log2) above a power of 2,
 * the rules of that step and its half are blended with a smoothstep weight, so
 * the likelihood stays continuous where the lattice changes.
 */
function chooseStep(curve: EstimateCurve, noise: SensoryNoise, xLo: number, xHi: number, motorSd: number): { coarse: number; fineShare: number } {
  const warp = curve.warpM;
  let sensory = 1;
  let vLo = Infinity;
  let vHi = -Infinity;
  for (const x of [xLo, 0.5 * (xLo + xHi), xHi]) {
    const u = warp.toU(noise.center(x));
    const w = noise.sdAt(x) / warp.dxdu(u);
    if (w < sensory) sensory = w;
    vLo = Math.min(vLo, u);
    vHi = Math.max(vHi, u);
  }
  vLo -= SLOPE_WINDOW;
  vHi += SLOPE_WINDOW;
  // The largest |slope| over the nodes inside the window and the interpolated slope at its two
  // ends: continuous as the window moves (a node enters with the value the end already had).
  const { v, xh, slope, breakAfter } = curve;
  let steepest = 0;
  for (let j = 0; j < v.length; j++) if (v[j] > vLo && v[j] < vHi && Math.abs(slope[j]) > steepest) steepest = Math.abs(slope[j]);
  for (const u of [vLo, vHi]) {
    if (!(u > v[0] && u < v[v.length - 1])) continue;
    const j = segmentIndex(v, u);
    if (!breakAfter[j]) steepest = Math.max(steepest, Math.abs(hermiteDerivative(v, xh, slope, j, u)));
  }
  let jumps = false;
  for (let j = 0; j + 1 < v.length && !jumps; j++) jumps = breakAfter[j] === 1 && v[j + 1] > vLo && v[j] < vHi;
  const motor = steepest > 0 ? (STEP_MOTION * motorSd) / steepest : Infinity;
  const ideal = Math.max(H_MIN * 2 ** BAND, Math.min((jumps ? H_MAX_AT_JUMPS : H_MAX) * sensory, motor));
  const t = Math.log2(ideal);
  const j = Math.floor(t);
  const frac = t - j;
  const s = frac < BAND ? frac / BAND : 1;
  return { coarse: 2 ** j, fineShare: 1 - s * s * (3 - 2 * s) };
}
