/**
 * The quadrature grid over the measurement for one condition's response
 * density: nodes UNIFORM in the warped measurement v (noise sds), with x̂ and
 * its slope at each node taken from the estimate curve's Hermite pieces.
 *
 * Why uniform: the integrand N(r; x̂(v), σ_m²)·p(v | x) is a smooth bell in v,
 * and the trapezoid rule with a uniform step on a smooth, fast-decaying
 * integrand converges exponentially (for a Gaussian of width w the relative
 * error is ≈ 2·exp(−2π²(w/h)²); Trefethen & Weideman, "The exponentially
 * convergent trapezoidal rule", SIAM Review 56:385, 2014, §5), with no end
 * corrections because the integrand vanishes at both ends of the window. The
 * step is the larger of H_MIN and the step over which x̂ moves STEP_MOTION
 * motor sds at its steepest (and at most H_MAX sensory sds), so a typical trial
 * touches 15–20 nodes.
 *
 * Two things break uniformity, and both are handled as before:
 *  - jumps of x̂ (breakAfter on the curve): the curve's pieces between breaks
 *    are integrated separately; a piece's end nodes sit at its ends, so the
 *    first and last steps are shorter;
 *  - segments where x̂ still moves more than SUBSTEP motor sds (the step
 *    clamped at H_MIN: motor noise small against slope × sensory noise, trap 1
 *    of issue #2) get uniform sub-steps, the count blended smoothly between
 *    ⌊q⌋ and ⌊q⌋+1 so the likelihood has no steps as parameters move it.
 * Where neighbouring steps differ, the composite rule carries the
 * Euler–Maclaurin end correction −d²/12·(g′(b) − g′(a)) of each segment
 * (Abramowitz & Stegun 25.4.7); summed over segments it becomes one
 * coefficient per node, (d²_right − d²_left)/12, which is zero wherever the
 * grid is uniform, so only the few nodes next to a break or a sub-stepped
 * segment pay for g′.
 */
import { hermite, hermiteDerivative, type EstimateCurve } from './estimateCurve.js';
import type { SensoryNoise } from './noise/types.js';
import { segmentIndex } from '../numerics/search.js';

/** At the steepest x̂ within reach of the design, one step moves x̂ by at most this many motor sds. */
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

/** A segment of one rule that gets sub-steps: from node `left` to node `right`. */
interface SubSegment {
  left: number;
  right: number;
  q: number;
  /** The rule's blend weight. */
  share: number;
  lo: number;
  hi: number;
}

export class MeasurementGrid {
  /** The lattice step of the nodes (the finer rule's step while two are blended). */
  readonly step: number;
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
  /** Sub-stepped segments, sorted by left node: nodes, x̂ range, points subFrom[s] … subTo[s] − 1 (subFrom = −1 until built). */
  readonly subLeft: Int32Array;
  readonly subRight: Int32Array;
  readonly subLo: Float64Array;
  readonly subHi: Float64Array;
  readonly subFrom: Int32Array;
  readonly subTo: Int32Array;
  subM = new Float64Array(0);
  subX = new Float64Array(0);
  /** Rule weight × dm/dv of each sub-step point. */
  subW = new Float64Array(0);
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
  ) {
    const { coarse, fineShare } = chooseStep(curve, noise, xLo, xHi, motorSd);
    const h = fineShare > 0 ? coarse / 2 : coarse;
    this.step = h;
    const { v: cv, xh: cx, slope: cs, breakAfter } = curve;
    const nc = cv.length;
    const vs: number[] = [];
    const xs: number[] = [];
    const ss: number[] = [];
    const seg: number[] = [];
    /** Lattice index of a node (v = index·h), or NaN for a piece end. */
    const lattice: number[] = [];
    const pieces: [number, number][] = [];
    const eps = 1e-9 * h;
    const push = (u: number, j: number, k: number) => {
      vs.push(u);
      xs.push(hermite(cv, cx, cs, j, u));
      ss.push(hermiteDerivative(cv, cx, cs, j, u));
      seg.push(j);
      lattice.push(k);
    };
    for (let p0 = 0; p0 < nc; ) {
      let p1 = p0;
      while (p1 < nc - 1 && !breakAfter[p1]) p1++;
      if (p1 === p0) {
        // A lone node between two jumps (refinement closing in on one jump can leave one): x̂ held
        // at its value from the middle of the gap on its left to the middle of the gap on its right.
        const a = p0 > 0 ? 0.5 * (cv[p0 - 1] + cv[p0]) : cv[p0];
        const b = p0 < nc - 1 ? 0.5 * (cv[p0] + cv[p0 + 1]) : cv[p0];
        const first = vs.length;
        for (const u of b > a ? [a, b] : [a]) {
          vs.push(u);
          xs.push(cx[p0]);
          ss.push(0);
          seg.push(-1);
          lattice.push(NaN);
        }
        pieces.push([first, vs.length - 1]);
        p0 = p1 + 1;
        continue;
      }
      // The piece runs from curve node p0 to p1, each end moved to the middle of the gap that
      // refinement left at a jump (the jump lies somewhere inside it; x̂ there is the piece's cubic
      // extrapolated across at most half a gap), so no measurement is left out. Its nodes: the two
      // ends and the lattice points k·h strictly inside.
      const a = p0 > 0 ? 0.5 * (cv[p0 - 1] + cv[p0]) : cv[p0];
      const b = p1 < nc - 1 ? 0.5 * (cv[p1] + cv[p1 + 1]) : cv[p1];
      const first = vs.length;
      push(a, p0, NaN);
      let j = p0;
      for (let k = Math.floor(a / h) + 1; k * h < b - eps; k++) {
        const u = k * h;
        if (u - a < eps) continue;
        while (j < p1 - 1 && cv[j + 1] <= u) j++;
        push(u, j, k);
      }
      push(b, p1 - 1, NaN);
      pieces.push([first, vs.length - 1]);
      p0 = p1 + 1;
    }
    const n = vs.length;
    this.n = n;
    this.v = Float64Array.from(vs);
    this.xh = Float64Array.from(xs);
    this.slope = Float64Array.from(ss);
    this.curveSeg = Int32Array.from(seg);
    const warp = curve.warpM;
    this.m = new Float64Array(n);
    this.jac = new Float64Array(n);
    this.curv = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      const u = this.v[k];
      this.m[k] = warp.fromU(u);
      this.jac[k] = warp.dxdu(u);
      this.curv[k] = warp.curvature(u);
    }

    // x̂ range over each node-to-node segment: the chord, the curve nodes inside, and how far each
    // cubic piece it overlaps can bend off its chord.
    const lo = new Float64Array(n);
    const hi = new Float64Array(n);
    for (let k = 0; k + 1 < n; k++) {
      let a = Math.min(this.xh[k], this.xh[k + 1]);
      let b = Math.max(this.xh[k], this.xh[k + 1]);
      let bulge = 0;
      // (curveSeg −1: a lone node's constant piece.)
      for (let j = this.curveSeg[k]; j >= 0 && j <= this.curveSeg[k + 1] && j < nc - 1; j++) {
        if (j > this.curveSeg[k] && cv[j] < this.v[k + 1]) {
          a = Math.min(a, cx[j]);
          b = Math.max(b, cx[j]);
        }
        bulge = Math.max(bulge, 0.25 * (cv[j + 1] - cv[j]) * Math.abs(cs[j] - cs[j + 1]));
      }
      lo[k] = a - bulge;
      hi[k] = b + bulge;
    }

    // The rule(s): trapezoid over each piece on the rule's nodes, sub-stepped where x̂ moves
    // more than SUBSTEP motor sds. While two steps are blended, the coarse rule uses the piece
    // ends and every other lattice point, the fine rule every node.
    const weight = new Float64Array(n);
    const emc = new Float64Array(n);
    const subs: SubSegment[] = [];
    const rules: [number, (k: number) => boolean][] = [];
    if (fineShare < 1) rules.push([fineShare > 0 ? 1 - fineShare : 1, fineShare > 0 ? (k) => !(lattice[k] % 2) : () => true]);
    if (fineShare > 0) rules.push([fineShare, () => true]);
    for (const [share, member] of rules) {
      for (const [first, last] of pieces) {
        let i = first;
        while (i < last) {
          let i2 = i + 1;
          while (i2 < last && !(Number.isNaN(lattice[i2]) || member(i2))) i2++;
          const d = this.v[i2] - this.v[i];
          if (d > 0) {
            let sLo = Infinity;
            let sHi = -Infinity;
            for (let k = i; k < i2; k++) {
              sLo = Math.min(sLo, lo[k]);
              sHi = Math.max(sHi, hi[k]);
            }
            const q = (sHi - sLo) / (SUBSTEP * motorSd);
            let end = d;
            let em = (d * d) / 12;
            if (q > 1) {
              const [n0, w] = blend(q);
              end = (1 - w) * (d / n0) + w * (d / (n0 + 1));
              em = ((1 - w) * (d / n0) ** 2 + w * (d / (n0 + 1)) ** 2) / 12;
              subs.push({ left: i, right: i2, q, share, lo: sLo, hi: sHi });
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
      weight[k] *= this.jac[k];
      // Equal neighbouring steps differ by rounding only: keep those nodes free of g′.
      if (Math.abs(emc[k]) <= tiny) emc[k] = 0;
    }
    this.weight = weight;
    this.emc = emc;
    subs.sort((a, b) => a.left - b.left);
    this.subLeft = Int32Array.from(subs, (s) => s.left);
    this.subRight = Int32Array.from(subs, (s) => s.right);
    this.subLo = Float64Array.from(subs, (s) => s.lo);
    this.subHi = Float64Array.from(subs, (s) => s.hi);
    this.subQ = Float64Array.from(subs, (s) => s.q);
    this.subShare = Float64Array.from(subs, (s) => s.share);
    this.subFrom = new Int32Array(subs.length).fill(-1);
    this.subTo = new Int32Array(subs.length);
  }

  /** First node of the segment holding v (clamped), by bisection. */
  nodeBelow(v: number): number {
    const a = this.v;
    let lo = 0;
    let hi = this.n - 1;
    if (!(v > a[0])) return 0;
    if (v >= a[hi]) return hi;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (a[mid] <= v) lo = mid;
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
    const [n0, w] = blend(this.subQ[s]);
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
        this.subX[i] = hermite(cv, cx, cs, j, u);
        this.subW[i] = share * weight * d * warp.dxdu(u);
      }
    }
    this.subTo[s] = this.subCount;
  }
}

/** ⌊q⌋ sub-steps blended with ⌊q⌋+1 by a smoothstep weight of the fraction, so the rule moves continuously with q. */
function blend(q: number): [number, number] {
  const n0 = Math.min(MAX_SUB, Math.floor(q));
  const frac = n0 === MAX_SUB ? 0 : q - n0;
  return [n0, frac * frac * (3 - 2 * frac)];
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
  vLo -= SENSORY_WINDOW;
  vHi += SENSORY_WINDOW;
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
