/**
 * The Bayes estimate x̂ as a function of the measurement, for one condition,
 * tabulated in warped measurement coordinates v (noise sds) and interpolated
 * by C¹ cubic Hermite pieces. A base grid is refined adaptively where the
 * interpolant misses the estimate (steep transitions under bimodal
 * posteriors); where the estimate jumps (mode-seeking losses, Weber noise at
 * m = 0) refinement closes in on the jump and the curve is split there, so no
 * interpolant ever bridges the gap.
 */
import type { GridPosterior } from './gridPosterior.js';
import type { Observer } from './observer.js';
import type { SensoryNoise, Warp } from './noise/types.js';
import { buildPosteriorGrid, measurementRange } from './gridFactory.js';
import { closedFormEstimate, evaluateClosedForm } from './closedForm.js';
import { segmentIndex } from '../numerics/search.js';

/**
 * Base grid step in v (noise sds). The first refinement round checks, and
 * keeps, every midpoint, so no stretch is sampled more coarsely than 1 sd;
 * with fourth-order node slopes that meets the tolerance almost everywhere
 * on smooth curves (measured: 58 estimates per curve on the benchmark case
 * against 69 from a 1-sd base and 95 with three-point slopes).
 */
export const CURVE_STEP = 2;
const EMPTY_F64: Float64Array<ArrayBufferLike> = new Float64Array(0);
/** Node, value, slope and break arrays in one buffer, grown as needed and never shrunk. */
interface NodeScratch {
  cap: number;
  v: Float64Array;
  x: Float64Array;
  sl: Float64Array;
  b: Uint8Array;
}
const newScratch = (): NodeScratch => ({ cap: 0, v: EMPTY_F64, x: EMPTY_F64, sl: EMPTY_F64, b: new Uint8Array(0) });
function ensureCapacity(sc: NodeScratch, n: number): NodeScratch {
  if (n > sc.cap) {
    const cap = Math.max(2 * sc.cap, 2 * n + 16);
    const buffer = new ArrayBuffer(8 * 3 * cap + cap);
    sc.cap = cap;
    sc.v = new Float64Array(buffer, 0, cap);
    sc.x = new Float64Array(buffer, 8 * cap, cap);
    sc.sl = new Float64Array(buffer, 16 * cap, cap);
    sc.b = new Uint8Array(buffer, 24 * cap, cap);
  }
  return sc;
}
/** refine's arrays of the current round. */
const scratch = newScratch();
/** quarterMisses' copy of the round's new nodes (allocating it per round was 5% of an evaluation). */
const quarterScratch = newScratch();
/** Step in v for curves given in closed form (log-linear), which are not refined. */
const CLOSED_FORM_STEP = 0.25;

/** How far beyond the prior's support a motor-aware observer's convolved posterior reaches (9 motor sds). */
export function motorReach(obs: Observer): number {
  return obs.motorAware ? 9 * obs.motorSd : 0;
}

/** Pointwise Bayes estimate at measurement m (used by the curve and by the sampler). */
export function estimateAt(obs: Observer, post: GridPosterior, m: number, hint: number): number {
  if (!obs.motorAware && obs.loss.estimateAt) return obs.loss.estimateAt(post, m, hint);
  post.setMeasurement(m);
  if (obs.motorAware) post.convolveGaussian(obs.motorSd);
  return obs.loss.estimate(post, hint);
}

export class EstimateCurve {
  readonly v: Float64Array;
  readonly xh: Float64Array;
  readonly slope: Float64Array;
  /** breakAfter[i] = 1: no interpolation between node i and i+1 (a jump). */
  readonly breakAfter: Uint8Array;
  readonly warpM: Warp;
  readonly post: GridPosterior;

  constructor(readonly obs: Observer, readonly noise: SensoryNoise, xLo: number, xHi: number) {
    const range = measurementRange(noise, xLo, xHi);
    const { grid, warpM } = buildPosteriorGrid(obs.prior, noise, range, motorReach(obs));
    this.post = grid;
    this.warpM = warpM;
    // A closed-form curve costs next to nothing per node and is never refined,
    // while the measurement grid sizes its sub-steps from the curve's pieces:
    // short pieces there (measured on a log-normal prior with log-space noise,
    // motor sd 0.2: 1437 µs per 300-trial evaluation at step 2, 362 µs at ¼).
    const closed = closedFormEstimate(obs, noise);
    const h = closed ? CLOSED_FORM_STEP : CURVE_STEP;
    const kLo = Math.floor(warpM.toU(range.lo) / h);
    const kHi = Math.ceil(warpM.toU(range.hi) / h);
    // Iterative estimators (power loss) converge in fewer steps from a close
    // start: linear extrapolation along the base sweep, the interpolant's own
    // prediction during refinement. The start never changes the answer beyond
    // the solver's tolerance, and solvers keep their bracket, so a poor guess
    // (a jump, a non-monotone curve) costs steps, not correctness.
    const at = (v: number, hint: number): number => {
      const m = warpM.fromU(v);
      return closed ? evaluateClosedForm(closed, m) : estimateAt(obs, grid, m, hint);
    };
    let vs: number[] = [];
    let xs: number[] = [];
    for (let k = kLo; k <= kHi; k++) {
      const n = xs.length;
      const guess = n >= 2 ? 2 * xs[n - 1] - xs[n - 2] : n === 1 ? xs[0] : NaN;
      vs.push(k * h);
      xs.push(at(k * h, guess));
    }
    let brk: number[] = new Array(vs.length).fill(0);
    if (!closed) [vs, xs, brk] = closeGaps(...this.refine(vs, xs, at, [xLo, xHi]));
    const n = vs.length;
    const buffer = new ArrayBuffer(8 * 3 * n + n);
    this.v = new Float64Array(buffer, 0, n);
    this.xh = new Float64Array(buffer, 8 * n, n);
    this.slope = new Float64Array(buffer, 16 * n, n);
    this.breakAfter = new Uint8Array(buffer, 24 * n, n);
    this.v.set(vs);
    this.xh.set(xs);
    this.breakAfter.set(brk);
    computeSlopes(this.v, this.xh, this.breakAfter, this.slope);
  }

  /**
   * Adaptive refinement: every segment's midpoint is computed and compared
   * with the cubic interpolant; where they disagree by more than a tolerance
   * tied to the motor noise (the scale on which the response density can see
   * an error in x̂) both halves are checked again. A segment that still fails
   * at the finest width holds a jump and is split there. Midpoints are kept
   * either way, so the base grid's step is halved everywhere.
   */
  /**
   * Could a stimulus in the design's range produce a measurement in [va, vb]
   * within 5 sensory sds? Elsewhere p(m | x) < 4e-6 of its peak and the
   * interpolation error there cannot reach the likelihood.
   */
  private plausible(va: number, vb: number, xLo: number, xHi: number): boolean {
    if (this.plausibleEnd(va, xLo, xHi) || this.plausibleEnd(vb, xLo, xHi)) return true;
    // A segment can also straddle the plausible band without its ends being in it.
    const n = this.noise;
    const mA = this.warpM.fromU(va);
    const mB = this.warpM.fromU(vb);
    return Math.min(mA, mB) < n.center(xLo) && Math.max(mA, mB) > n.center(xHi);
  }

  private plausibleEnd(v: number, xLo: number, xHi: number): boolean {
    const n = this.noise;
    const m = this.warpM.fromU(v);
    const xc = Math.min(xHi, Math.max(xLo, n.stimulusAt(m)));
    return Math.abs(m - n.center(xLo)) < 5 * n.sdAt(xLo) || Math.abs(m - n.center(xHi)) < 5 * n.sdAt(xHi) || Math.abs(m - n.center(xc)) < 5 * n.sdAt(xc);
  }

  private refine(vs: number[], xs: number[], at: (v: number, hint: number) => number, [xLo, xHi]: readonly [number, number]): [number[], number[], number[]] {
    // Never below the estimate's own numerical noise (~1e-8 of its magnitude).
    let big = 0;
    for (const x of xs) if (Math.abs(x) > big) big = Math.abs(x);
    const tol = Math.max(REFINE_TOL * this.obs.motorSd, 1e-7 * big);
    let brk = new Array(vs.length).fill(0);
    let check = new Array(vs.length).fill(1); // check[i]: segment i still to be tested
    const passed: number[] = [];
    // Scratch shared by every curve and round (typed arrays of this size live off the
    // heap, and a fresh set per curve or round cost more than the bookkeeping they
    // serve); refine never runs inside another refine.
    for (let round = 0; round < MAX_REFINE_ROUNDS; round++) {
      const len = vs.length;
      const { v, x, sl, b } = ensureCapacity(scratch, len);
      for (let i = 0; i < len; i++) {
        v[i] = vs[i];
        x[i] = xs[i];
        b[i] = brk[i];
      }
      // Slopes only where a segment is checked (the same five-point rule as
      // computeSlopes, which needs them everywhere).
      for (let i = 0; i + 1 < len; i++) {
        if (!check[i] || brk[i] || !this.plausible(vs[i], vs[i + 1], xLo, xHi)) {
          check[i] = 0;
          continue;
        }
        if (i === 0 || !check[i - 1]) sl[i] = nodeSlope(v, x, b, len, i);
        sl[i + 1] = nodeSlope(v, x, b, len, i + 1);
      }
      const nv: number[] = [];
      const nx: number[] = [];
      const nb: number[] = [];
      const nc: number[] = [];
      // Checked segments whose midpoint passed: old index, new index of their left node.
      passed.length = 0;
      let any = false;
      for (let i = 0; i < len; i++) {
        nv.push(vs[i]);
        nx.push(xs[i]);
        if (i === len - 1) {
          nb.push(0);
          nc.push(0);
          break;
        }
        if (!check[i]) {
          nb.push(brk[i]);
          nc.push(0);
          continue;
        }
        const vm = 0.5 * (vs[i] + vs[i + 1]);
        const pred = hermite(v, x, sl, i, vm);
        const actual = at(vm, pred);
        const failed = Math.abs(pred - actual) > tol;
        if (failed && round === MAX_REFINE_ROUNDS - 1 && Math.abs(pred - actual) > JUMP_FACTOR * tol) {
          // Finest width reached and still no agreement: a jump. Split at the
          // midpoint, keeping each side's limit.
          const leftCloser = Math.abs(actual - xs[i]) <= Math.abs(actual - xs[i + 1]);
          nb.push(leftCloser ? 0 : 1);
          nc.push(0);
          nv.push(vm);
          nx.push(actual);
          nb.push(leftCloser ? 1 : 0);
          nc.push(0);
          continue;
        }
        if (!failed) passed.push(i, nv.length - 1);
        nb.push(0);
        nc.push(failed ? 1 : 0);
        nv.push(vm);
        nx.push(actual);
        nb.push(0);
        nc.push(failed ? 1 : 0);
        any = any || failed;
      }
      if (passed.length > 0 && this.quarterMisses(v, x, sl, nv, nx, nb, nc, passed, tol)) any = true;
      vs = nv;
      xs = nx;
      brk = nb;
      check = nc;
      if (!any) break;
    }
    return [vs, xs, brk];
  }

  /**
   * A midpoint can agree with the interpolant by accident: errors of the node
   * slopes that are equal at both ends of a segment move the cubic by
   * h·δ·t(1 − t)(1 − 2t), which vanishes at t = ½ and peaks near the quarter
   * points (measured: a segment passed its midpoint test while missing x̂ by
   * 16 tolerances at t ≈ 0.28, and whether a neighbouring segment's test
   * happened to fail decided whether it was refined, so the log-likelihood
   * stepped by 1e−3 as the parameters moved). So each passed segment's old
   * interpolant is compared, at its quarter points, with the new one through
   * its midpoint (slopes from the refined node set, as the final curve takes
   * them); where they differ by more than the tolerance, both halves are
   * checked again. Returns whether any were.
   */
  private quarterMisses(v: Float64Array, x: Float64Array, sl: Float64Array, nv: number[], nx: number[], nb: number[], nc: number[], passed: number[], tol: number): boolean {
    const n = nv.length;
    const { v: V, x: X, b: B } = ensureCapacity(quarterScratch, n);
    const S = QUARTER_SLOPES;
    for (let k = 0; k < n; k++) {
      V[k] = nv[k];
      X[k] = nx[k];
      B[k] = nb[k];
    }
    let any = false;
    for (let p = 0; p < passed.length; p += 2) {
      const i = passed[p];
      const j = passed[p + 1];
      for (let k = 0; k < 3; k++) S[k] = nodeSlope(V, X, B, n, j + k);
      const h = V[j + 2] - V[j];
      let miss = false;
      for (const t of QUARTERS) {
        const u = V[j] + t * h;
        const half = t < 0.5 ? 0 : 1;
        const hn = V[j + half + 1] - V[j + half];
        const tn = (u - V[j + half]) / hn;
        const fresh = hermitePiece(X[j + half], X[j + half + 1], S[half], S[half + 1], hn, tn);
        if (Math.abs(fresh - hermite(v, x, sl, i, u)) > tol) miss = true;
      }
      if (miss) {
        nc[j] = 1;
        nc[j + 1] = 1;
        any = true;
      }
    }
    return any;
  }

  /** Index i with v[i] ≤ v < v[i+1] (clamped); nodes are not uniform. */
  segmentOf(v: number): number {
    return segmentIndex(this.v, v);
  }

  /** Cubic Hermite interpolation on segment i at v. */
  interpolate(i: number, v: number): number {
    return hermite(this.v, this.xh, this.slope, i, v);
  }

  /** Derivative dx̂/dv of the interpolant on segment i at v. */
  derivative(i: number, v: number): number {
    return hermiteDerivative(this.v, this.xh, this.slope, i, v);
  }
}

export function hermiteDerivative(vArr: Float64Array, xh: Float64Array, slope: Float64Array, i: number, v: number): number {
  const v0 = vArr[i];
  const h = vArr[i + 1] - v0;
  if (h <= 0) return slope[i];
  const t = (v - v0) / h;
  const t2 = t * t;
  return ((6 * t2 - 6 * t) * xh[i] + (-6 * t2 + 6 * t) * xh[i + 1]) / h + (3 * t2 - 4 * t + 1) * slope[i] + (3 * t2 - 2 * t) * slope[i + 1];
}

/**
 * Refinement leaves each jump inside a gap segment of the finest width, whose
 * two ends hold the two sides' values. Integrals that skip the gap would lose
 * p(m | x) over it (measured: up to 1e-4 of the response density's total on
 * bimodal designs). Shrink every gap to a point instead: each side is carried
 * to the gap's midpoint by linear extrapolation (its error is quadratic in a
 * width of ~1e-4 noise sds), leaving a zero-width break there, so every
 * measurement belongs to one side or the other.
 */
function closeGaps(vs: number[], xs: number[], brk: number[]): [number[], number[], number[]] {
  if (!brk.some((b, i) => b && vs[i + 1] > vs[i])) return [vs, xs, brk];
  const nv: number[] = [];
  const nx: number[] = [];
  const nb: number[] = [];
  const chord = (i: number, j: number) => (i >= 0 && j < vs.length && !brk[Math.min(i, j)] && vs[j] > vs[i] ? (xs[j] - xs[i]) / (vs[j] - vs[i]) : 0);
  for (let i = 0; i < vs.length; i++) {
    nv.push(vs[i]);
    nx.push(xs[i]);
    if (!(brk[i] && i + 1 < vs.length && vs[i + 1] > vs[i])) {
      nb.push(brk[i]);
      continue;
    }
    const c = 0.5 * (vs[i] + vs[i + 1]);
    nb.push(0);
    nv.push(c);
    nx.push(xs[i] + chord(i - 1, i) * (c - vs[i]));
    nb.push(1);
    nv.push(c);
    nx.push(xs[i + 1] - chord(i + 1, i + 2) * (vs[i + 1] - c));
    nb.push(0);
  }
  return [nv, nx, nb];
}

const QUARTERS = [0.25, 0.75];
/** The three node slopes of the segment quarterMisses is checking. */
const QUARTER_SLOPES = new Float64Array(3);

/** The cubic Hermite piece of width h with end values y0, y1 and end slopes s0, s1, at t = (v − v0)/h. */
function hermitePiece(y0: number, y1: number, s0: number, s1: number, h: number, t: number): number {
  const t2 = t * t;
  const t3 = t2 * t;
  return (2 * t3 - 3 * t2 + 1) * y0 + (t3 - 2 * t2 + t) * h * s0 + (-2 * t3 + 3 * t2) * y1 + (t3 - t2) * h * s1;
}

/** Interpolation tolerance for x̂, as a fraction of the motor-noise sd. */
const REFINE_TOL = 1e-4;
const MAX_REFINE_ROUNDS = 14;
/** At the finest width, a miss this many tolerances wide is a jump, not noise. */
const JUMP_FACTOR = 100;

export function hermite(vArr: Float64Array, xh: Float64Array, slope: Float64Array, i: number, v: number): number {
  const v0 = vArr[i];
  const h = vArr[i + 1] - v0;
  if (h <= 0) return xh[i];
  return hermitePiece(xh[i], xh[i + 1], slope[i], slope[i + 1], h, (v - v0) / h);
}

/**
 * Node slopes for the Hermite pieces: the derivative of the polynomial through
 * up to five neighbouring nodes of the same unbroken piece (centred where the
 * piece allows), on the non-uniform spacing refinement leaves (Fornberg 1988,
 * Math. Comp. 51:699, the Lagrange form). Fourth-order slopes make the cubic
 * pieces fourth-order accurate; three-point slopes (second order) left the
 * interpolation error at ~1e-3 log-likelihood units on 300 trials and needed
 * about a third more estimates to meet the refinement tolerance.
 */
function computeSlopes(v: Float64Array, xh: Float64Array, breakAfter: Uint8Array, slope: Float64Array): void {
  const n = v.length;
  for (let i = 0; i < n; i++) slope[i] = nodeSlope(v, xh, breakAfter, n, i);
}

/** The slope at node i of the first n nodes (see computeSlopes). */
function nodeSlope(v: Float64Array, xh: Float64Array, breakAfter: Uint8Array, n: number, i: number): number {
  let lo = i;
  let hi = i;
  // Grow the stencil by one node at a time, alternating sides, up to five.
  while (hi - lo < 4) {
    const canL = lo - 1 >= 0 && !breakAfter[lo - 1] && v[lo] > v[lo - 1];
    const canR = hi < n - 1 && !breakAfter[hi] && v[hi + 1] > v[hi];
    if (!canL && !canR) break;
    if (canL && (!canR || i - lo <= hi - i)) lo--;
    else hi++;
  }
  return hi > lo ? lagrangeDerivative(v, xh, lo, hi, i) : 0;
}

/** Derivative at v[i] of the polynomial through the nodes lo..hi (i among them). */
function lagrangeDerivative(v: Float64Array, y: Float64Array, lo: number, hi: number, i: number): number {
  const xi = v[i];
  let d = 0;
  for (let j = lo; j <= hi; j++) {
    if (j === i) continue;
    // L_j′(x_i) = Π_{k≠i,j}(x_i − x_k) / Π_{k≠j}(x_j − x_k)
    let num = 1;
    let den = v[j] - xi;
    for (let k = lo; k <= hi; k++) {
      if (k === i || k === j) continue;
      num *= xi - v[k];
      den *= v[j] - v[k];
    }
    d += (y[j] - y[i]) * (num / den);
  }
  return d;
}
