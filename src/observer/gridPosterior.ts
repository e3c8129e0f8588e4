/**
 * The observer's posterior over the stimulus on a composite Gauss–Legendre
 * grid, in warped coordinates u where the sensory noise sd is about one unit.
 *
 * Why this layout:
 *  - Panels start exactly at finite support ends, so truncated posteriors
 *    (uniform prior) are integrated without the O(h) error a uniform grid has
 *    at a jump of the density.
 *  - Within a panel the density is represented by its Legendre series (the
 *    discrete transform of the node values), so the cdf and density at any
 *    point cost a short recurrence and no new likelihood evaluations.
 *  - Panel positions are multiples of the panel width from a fixed anchor and
 *    move continuously with the parameters, so the likelihood has no steps.
 * All work is in log densities; the normaliser comes from the node sum.
 */
import { gaussHermite, gaussLegendre } from '../numerics/gaussRules.js';
import { legendreIntegral, legendreTransform, legendreValue } from '../numerics/legendre.js';
import { EXP_TABLE_MAX, expNeg } from '../numerics/expTable.js';
import type { Distribution } from './distributions/types.js';
import type { SensoryNoise, Warp } from './noise/types.js';

export const NODES_PER_PANEL = 10;
/**
 * Log densities more than this below the peak are treated as zero (e^-40 ≈
 * 4e-18 of the peak, below double rounding of any sum over the nodes). It is
 * also the table range of expNeg, which normalise uses for its one exp per node.
 */
const LOG_CUTOFF = EXP_TABLE_MAX;
/** Half-width, in noise sds, of the node window evaluated around the likelihood peak. */
const WINDOW_U = 14;
/** Half-width, in noise sds, of the first window of a unimodal posterior (grown by panels as needed). */
const START_U = 7;
const MAX_NODES = 20000;
/** Legendre recurrence constants: P_{k+1} = REC_A[k]·t·P_k − REC_B[k]·P_{k−1}, and 1/(2k+1). */
const REC_A = Float64Array.from({ length: NODES_PER_PANEL }, (_, k) => (2 * k + 1) / (k + 1));
const REC_B = Float64Array.from({ length: NODES_PER_PANEL }, (_, k) => k / (k + 1));
const INV_ODD = Float64Array.from({ length: NODES_PER_PANEL }, (_, k) => 1 / (2 * k + 1));
/**
 * Scratch shared by every grid: one panel's coefficients divided by 2k+1 (the
 * cdf's terms), filled and read within one quantile call. Per grid it was an
 * allocation per evaluation (typed arrays over 64 bytes get their own buffer).
 */
const COEF_INT = new Float64Array(NODES_PER_PANEL);

export interface GridSetup {
  prior: Distribution;
  noise: SensoryNoise;
  warp: Warp;
  /** Range to cover, in u, before intersecting with the prior's support. */
  uLo: number;
  uHi: number;
  panelWidth: number;
  /**
   * Reach, in x, beyond a finite support end that the grid must also cover:
   * the distribution of x − η that a motor-aware observer weighs
   * (convolveGaussian) is not confined to the prior's support. 0 by default.
   */
  extendX?: number;
}

export class GridPosterior {
  readonly nPanels: number;
  readonly nNodes: number;
  readonly panelStart: Float64Array;
  readonly panelHalf: Float64Array;
  readonly u: Float64Array;
  readonly x: Float64Array;
  /** Gauss–Legendre weight in u (half-width included). */
  readonly quadWeight: Float64Array;
  private readonly logBase: Float64Array;
  /** dx/du at the nodes, and its log. */
  /** dx/du at each node. */
  readonly jac: Float64Array;
  private readonly logJac: Float64Array;
  /** dx/du is the same at every node (a linear warp): densities in u and x peak at the same node. */
  private readonly constantJac: boolean;
  /** The noise sd is the same at every node (constant noise): its inverse and log, else NaN. */
  private readonly constInvSd: number;
  private readonly constLogSd: number;
  private readonly center: Float64Array;
  private readonly invSd: Float64Array;
  private readonly logSd: Float64Array;
  private readonly logVal: Float64Array;
  /** Normalised density in u at the nodes. */
  readonly f: Float64Array;
  /** Normalised mass at the nodes: f · quadWeight. */
  readonly mass: Float64Array;
  /** Cumulative mass at the start of each panel (valid for panels in the window). */
  readonly cum: Float64Array;
  private readonly coef: Float64Array;
  private readonly coefStamp: Int32Array;
  private stamp = 0;
  first = 0;
  last = -1;
  readonly warp: Warp;
  readonly supportU: readonly [number, number];
  /** The prior's support in stimulus units. */
  readonly supportX: readonly [number, number];
  private readonly transform: Float64Array;
  private readonly uniformWidth: number;
  private readonly anchor: number;
  private readonly prior: Distribution;
  private readonly noise: SensoryNoise;
  private measurement = NaN;
  private exactSd = NaN;
  private exactLogSd = NaN;
  /** False after convolveGaussian: the exact density is then no longer prior × likelihood. */
  exactAvailable = false;
  /**
   * The posterior is log-concave for every measurement (log-concave prior and
   * constant Gaussian noise), so mode-seeking estimates need no global scan.
   * It stays log-concave under the motor-noise convolution.
   */
  readonly logConcave: boolean;
  /**
   * The posterior is unimodal for every measurement: log-concave in the warped
   * coordinate, where the noise is Gaussian with constant sd (a log-concave
   * prior with constant noise, or a prior log-concave in log x with noise
   * Gaussian in log space). Its mass then sits around the likelihood peak and
   * a window's best position is found without a global scan.
   */
  readonly unimodal: boolean;

  constructor(setup: GridSetup) {
    const { prior, noise, warp } = setup;
    this.warp = warp;
    this.prior = prior;
    this.noise = noise;
    this.logConcave = prior.logConcave && noise.family === 'constant';
    this.unimodal = this.logConcave || (prior.logConcaveInLog && noise.family === 'log-gaussian');
    const sLo = Number.isFinite(prior.support[0]) ? warp.toU(prior.support[0]) : -Infinity;
    const sHi = Number.isFinite(prior.support[1]) ? warp.toU(prior.support[1]) : Infinity;
    this.supportU = [sLo, sHi];
    this.supportX = prior.support;
    let lo = Math.max(setup.uLo, sLo);
    let hi = Math.min(setup.uHi, sHi);
    if (!(hi > lo)) throw new RangeError('the measurements lie entirely outside the prior support');
    // Nodes may sit in [eLo, eHi]: the support, widened by extendX at finite ends
    // (where the warp allows it; the prior density is 0 out there).
    const ext = setup.extendX ?? 0;
    const widen = (end: number, dir: number): number => {
      const u = warp.toU(end + dir * ext);
      return Number.isFinite(u) ? u : warp.toU(end);
    };
    const eLo = ext > 0 && Number.isFinite(sLo) ? widen(prior.support[0], -1) : sLo;
    const eHi = ext > 0 && Number.isFinite(sHi) ? widen(prior.support[1], 1) : sHi;
    if (lo <= sLo) lo = eLo;
    if (hi >= sHi) hi = eHi;
    const W = setup.panelWidth;
    this.uniformWidth = W;
    // Anchor panels at a finite support end when there is one, else at u = 0.
    const anchor = Number.isFinite(sLo) ? sLo : Number.isFinite(sHi) ? sHi : 0;
    this.anchor = anchor;
    const pFirst = Math.floor((lo - anchor) / W);
    const pLast = Math.ceil((hi - anchor) / W) - 1;
    const starts: number[] = [];
    const halves: number[] = [];
    for (let p = pFirst; p <= pLast; p++) {
      const a0 = anchor + p * W;
      const b0 = a0 + W;
      // Panels break at finite support ends (the density jumps or kinks there).
      const cuts = [a0];
      if (sLo > a0 && sLo < b0) cuts.push(sLo);
      if (sHi > a0 && sHi < b0) cuts.push(sHi);
      cuts.push(b0);
      for (let q = 0; q + 1 < cuts.length; q++) {
        const a = Math.max(cuts[q], eLo);
        const b = Math.min(cuts[q + 1], eHi);
        if (b <= a) continue;
        starts.push(a);
        halves.push(0.5 * (b - a));
      }
    }
    this.nPanels = starts.length;
    const n = NODES_PER_PANEL;
    this.nNodes = this.nPanels * n;
    if (this.nNodes > MAX_NODES) {
      throw new RangeError(`posterior grid would need ${this.nNodes} nodes (limit ${MAX_NODES}): the prior is far narrower than the range of measurements`);
    }
    const J = this.nNodes;
    const P = this.nPanels;
    // One backing buffer for every array of the grid: a grid is built on every
    // evaluation, and each typed array of this size gets its own off-heap
    // buffer, whose allocation and collection cost more than filling it
    // (measured: 13 separate arrays made the constructor about 2× slower).
    const buffer = new ArrayBuffer(8 * (13 * J + 3 * P + 1) + 4 * P);
    const store = new Float64Array(buffer, 0, 13 * J + 3 * P + 1);
    const view = (i: number) => store.subarray(i * J, (i + 1) * J);
    this.panelStart = store.subarray(13 * J + P + 1, 13 * J + 2 * P + 1);
    this.panelHalf = store.subarray(13 * J + 2 * P + 1);
    this.panelStart.set(starts);
    this.panelHalf.set(halves);
    this.u = view(0);
    this.x = view(1);
    this.quadWeight = view(2);
    this.logBase = view(3);
    this.center = view(4);
    this.invSd = view(5);
    this.logSd = view(6);
    this.logVal = view(7);
    this.f = view(8);
    this.mass = view(9);
    this.coef = view(10);
    this.jac = view(11);
    this.logJac = view(12);
    this.cum = store.subarray(13 * J, 13 * J + P + 1);
    this.coefStamp = new Int32Array(buffer, 8 * (13 * J + 3 * P + 1), P).fill(-1);
    this.transform = legendreTransform(n);
    const gl = gaussLegendre(n);
    // Constant noise and linear warps repeat the same sd and dx/du at every
    // node: take each logarithm only when its argument changes.
    let lastSd = NaN;
    let lastLogSd = NaN;
    let lastJac = NaN;
    let lastLogJac = NaN;
    let jacChanges = 0;
    let sdChanges = 0;
    const { u, x, quadWeight, jac: jacs, logJac, logBase, center, invSd, logSd, panelStart, panelHalf } = this;
    const glNodes = gl.nodes;
    const glWeights = gl.weights;
    for (let p = 0; p < P; p++) {
      const half = panelHalf[p];
      const mid = panelStart[p] + half;
      for (let i = 0; i < n; i++) {
        const j = p * n + i;
        const uj = mid + half * glNodes[i];
        const xj = warp.fromU(uj);
        u[j] = uj;
        x[j] = xj;
        quadWeight[j] = half * glWeights[i];
        const jac = warp.dxdu(uj);
        jacs[j] = jac;
        if (jac !== lastJac) {
          jacChanges++;
          lastJac = jac;
          lastLogJac = Math.log(jac);
        }
        logJac[j] = lastLogJac;
        logBase[j] = prior.logPdf(xj) + lastLogJac;
        center[j] = noise.center(xj);
        const sd = noise.sdAt(xj);
        if (sd !== lastSd) {
          sdChanges++;
          lastSd = sd;
          lastLogSd = Math.log(sd);
        }
        invSd[j] = 1 / sd;
        logSd[j] = lastLogSd;
      }
    }
    this.constantJac = jacChanges === 1;
    this.constInvSd = sdChanges === 1 ? 1 / lastSd : NaN;
    this.constLogSd = sdChanges === 1 ? lastLogSd : NaN;
  }

  /** Condition on measurement m (in the noise's measurement space). */
  setMeasurement(m: number): void {
    this.pending = false;
    const max = this.evaluateWindow(m);
    this.normalise(max, this.winA, this.winB);
  }

  /**
   * Condition on m, but leave the normalised density, the masses and the panel
   * sums to be filled by the first method that needs them: an estimator that
   * only brackets a root of the exact density near the mode (hit-or-miss on a
   * unimodal posterior) never pays for them. Until then the fields f, mass
   * and cum are stale: code that reads them directly must use setMeasurement.
   */
  setMeasurementDeferred(m: number): void {
    const max = this.evaluateWindow(m);
    const [first, last] = this.massWindow(max, this.winA, this.winB);
    this.first = first;
    this.last = last;
    this.pendingMax = max;
    this.pending = true;
    this.stamp++;
  }

  /** Fill what setMeasurementDeferred left (the same values setMeasurement gives). */
  private settle(): void {
    this.pending = false;
    this.normalise(this.pendingMax, this.first, this.last);
  }

  private pending = false;
  private pendingMax = 0;

  /**
   * The posterior mean for measurement m, without storing the normalised
   * density, its masses or the panel sums (what the squared loss's estimate
   * curve needs, and a third of the work of setMeasurement after the
   * evaluation). The same nodes as setMeasurement and then mean(); the sums
   * are divided once at the end, so the value agrees to rounding. Leaves no
   * posterior set: call setMeasurement before anything else.
   */
  meanAt(m: number): number {
    this.pending = false;
    if (this.unimodal) {
      const mean = this.unimodalMeanAt(m);
      if (mean === mean) return mean;
    }
    const max = this.evaluateWindow(m);
    const [first, last] = this.massWindow(max, this.winA, this.winB);
    const thr = max - LOG_CUTOFF;
    const logVal = this.logVal;
    const w = this.quadWeight;
    const x = this.x;
    let z = 0;
    let s = 0;
    for (let j = first; j <= last; j++) {
      const v = logVal[j];
      const mj = (v >= thr ? expNeg(max - v) : 0) * w[j];
      z += mj;
      s += mj * x[j];
    }
    this.first = 0;
    this.last = -1;
    this.stamp++;
    return s / z;
  }

  /**
   * meanAt for a unimodal posterior in one pass: climb from the likelihood
   * peak to the node of largest log density (the node values rise to one peak
   * and fall), then walk out from it each way, summing as it goes, until the
   * first node below the cutoff. The nodes summed are those the windowed path
   * sums (every node within LOG_CUTOFF of the peak), each with the same
   * weight; only the order of the sums differs (rounding). NaN when the
   * likelihood peak has no position in u (the windowed path then decides).
   */
  private unimodalMeanAt(m: number): number {
    const uPeak = this.warp.toU(this.noise.stimulusAt(m));
    if (!Number.isFinite(uPeak)) return NaN;
    this.measurement = m;
    this.exactAvailable = true;
    const J = this.nNodes;
    const center = this.center;
    const invSd = this.invSd;
    const logBase = this.logBase;
    const logSd = this.logSd;
    const w = this.quadWeight;
    const x = this.x;
    const at = (k: number): number => {
      const d = (m - center[k]) * invSd[k];
      return logBase[k] - 0.5 * d * d - logSd[k];
    };
    let j = Math.min(J - 1, this.nodeAtOrAbove(uPeak));
    let max = at(j);
    for (let k = j + 1; k < J; k++) {
      const v = at(k);
      if (!(v > max)) break;
      max = v;
      j = k;
    }
    for (let k = j - 1; k >= 0; k--) {
      const v = at(k);
      if (!(v > max)) break;
      max = v;
      j = k;
    }
    if (!(max > -Infinity)) return NaN;
    const thr = max - LOG_CUTOFF;
    let z = 0;
    let s = 0;
    const iSd = this.constInvSd;
    if (iSd === iSd) {
      // Constant noise: the same values as at(k), the sd's inverse and log held in registers.
      // (Kept apart from the general loops below on purpose: one set of loops choosing per node
      // between the constants and the arrays cost 3–15% of an evaluation, measured.)
      const lSd = this.constLogSd;
      for (let k = j; k < J; k++) {
        const d = (m - center[k]) * iSd;
        const v = logBase[k] - 0.5 * d * d - lSd;
        if (!(v >= thr)) break;
        const mk = expNeg(max - v) * w[k];
        z += mk;
        s += mk * x[k];
      }
      for (let k = j - 1; k >= 0; k--) {
        const d = (m - center[k]) * iSd;
        const v = logBase[k] - 0.5 * d * d - lSd;
        if (!(v >= thr)) break;
        const mk = expNeg(max - v) * w[k];
        z += mk;
        s += mk * x[k];
      }
      this.first = 0;
      this.last = -1;
      this.stamp++;
      return s / z;
    }
    for (let k = j; k < J; k++) {
      const v = at(k);
      if (!(v >= thr)) break;
      const mk = expNeg(max - v) * w[k];
      z += mk;
      s += mk * x[k];
    }
    for (let k = j - 1; k >= 0; k--) {
      const v = at(k);
      if (!(v >= thr)) break;
      const mk = expNeg(max - v) * w[k];
      z += mk;
      s += mk * x[k];
    }
    this.first = 0;
    this.last = -1;
    this.stamp++;
    return s / z;
  }

  /** Nodes [winA, winB] evaluated by the last evaluateWindow. */
  private winA = 0;
  private winB = -1;

  /** Evaluate the log posterior on the nodes that can carry mass for m (sets winA, winB); returns the largest value. */
  private evaluateWindow(m: number): number {
    const J = this.nNodes;
    this.measurement = m;
    this.exactAvailable = true;
    if (this.unimodal) {
      const uPeak = this.warp.toU(this.noise.stimulusAt(m));
      if (Number.isFinite(uPeak)) return this.unimodalWindow(m, uPeak);
    }
    // With a log-concave prior the posterior sits within a few noise sds of
    // the likelihood peak: evaluate only there, and fall back to every node
    // when the window's edges still carry mass.
    if (this.prior.logConcave) {
      const uPeak = this.warp.toU(this.noise.stimulusAt(m));
      if (Number.isFinite(uPeak)) {
        // Whole panels: normalise works panel by panel and must never read a
        // node this measurement did not evaluate.
        const a = Math.floor(this.nodeAtOrAbove(uPeak - WINDOW_U) / NODES_PER_PANEL) * NODES_PER_PANEL;
        const b = Math.min(J - 1, Math.ceil(this.nodeAtOrAbove(uPeak + WINDOW_U) / NODES_PER_PANEL) * NODES_PER_PANEL - 1);
        if (b - a > 2 * NODES_PER_PANEL) {
          const max = this.evaluate(m, a, b);
          const thr = max - LOG_CUTOFF;
          const edgesEmpty = (a === 0 || this.logVal[a] < thr) && (b === J - 1 || this.logVal[b] < thr);
          if (edgesEmpty && max > -Infinity) {
            this.winA = a;
            this.winB = b;
            return max;
          }
        }
      }
    }
    this.winA = 0;
    this.winB = J - 1;
    return this.evaluate(m, 0, J - 1);
  }

  /**
   * A posterior log-concave in u has log densities at the nodes that rise to
   * one peak and fall: start from whole panels within START_U of the
   * likelihood peak and add a panel at an end while that end's node is still
   * within LOG_CUTOFF of the largest value seen. When neither end qualifies,
   * every node beyond lies lower still, so the window holds the same peak and
   * the same nodes above the cutoff as an evaluation of every node would.
   */
  private unimodalWindow(m: number, uPeak: number): number {
    const n = NODES_PER_PANEL;
    const J = this.nNodes;
    let a = Math.min(J - n, Math.floor(this.nodeAtOrAbove(uPeak - START_U) / n) * n);
    let b = Math.min(J - 1, Math.max(a + n - 1, Math.ceil(this.nodeAtOrAbove(uPeak + START_U) / n) * n - 1));
    let max = this.evaluate(m, a, b);
    const logVal = this.logVal;
    for (;;) {
      const thr = max - LOG_CUTOFF;
      let grown = false;
      if (a > 0 && !(logVal[a] < thr)) {
        const v = this.evaluate(m, a - n, a - 1);
        if (v > max) max = v;
        a -= n;
        grown = true;
      }
      if (b < J - 1 && !(logVal[b] < thr)) {
        const v = this.evaluate(m, b + 1, b + n);
        if (v > max) max = v;
        b += n;
        grown = true;
      }
      if (!grown) break;
    }
    this.winA = a;
    this.winB = b;
    return max;
  }

  private evaluate(m: number, a: number, b: number): number {
    // Locals: V8 does not hoist the fields' loads past the stores into logVal.
    const center = this.center;
    const invSd = this.invSd;
    const logBase = this.logBase;
    const logSd = this.logSd;
    const logVal = this.logVal;
    let max = -Infinity;
    const iSd = this.constInvSd;
    if (iSd === iSd) {
      const lSd = this.constLogSd;
      for (let j = a; j <= b; j++) {
        const d = (m - center[j]) * iSd;
        const v = logBase[j] - 0.5 * d * d - lSd;
        logVal[j] = v;
        if (v > max) max = v;
      }
      return max;
    }
    for (let j = a; j <= b; j++) {
      const d = (m - center[j]) * invSd[j];
      const v = logBase[j] - 0.5 * d * d - logSd[j];
      logVal[j] = v;
      if (v > max) max = v;
    }
    return max;
  }

  /** First node index with u ≥ target (nNodes when none). */
  private nodeAtOrAbove(target: number): number {
    let lo = 0;
    let hi = this.nNodes;
    // Narrow the bisection to the panel holding the target and its neighbours
    // (panels are uniform but for clipped ends; the answer is the same).
    const p = this.panelOf(target);
    if (p > 0 && this.u[(p - 1) * NODES_PER_PANEL] < target) lo = (p - 1) * NODES_PER_PANEL;
    if (p + 2 < this.nPanels && this.u[(p + 2) * NODES_PER_PANEL] >= target) hi = (p + 2) * NODES_PER_PANEL;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (this.u[mid] < target) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  /** Unnormalised log posterior density in x, evaluated exactly (prior × likelihood). */
  exactLogDensity(x: number): number {
    // Outside the prior's support the density is 0; without this, log-space
    // noise gives NaN there (log of a negative x), which poisons the
    // inverted-Gaussian kernel sum near a support end.
    const lp = this.prior.logPdf(x);
    if (lp === -Infinity) return -Infinity;
    const sd = this.noise.sdAt(x);
    const d = (this.measurement - this.noise.center(x)) / sd;
    // Root finders call this a dozen times per estimate; with constant noise
    // the logarithm of the sd is the same every time.
    if (sd !== this.exactSd) {
      this.exactSd = sd;
      this.exactLogSd = Math.log(sd);
    }
    return lp - 0.5 * d * d - this.exactLogSd;
  }

  /** Index of the node where the density in x (not in u) is highest. */
  modeNodeX(): number {
    let j = this.first;
    let best = -Infinity;
    if (this.pending) {
      // Not normalised yet: the same comparison in logs.
      for (let i = this.first; i <= this.last; i++) {
        const lx = this.logVal[i] - this.logJac[i];
        if (lx > best) {
          best = lx;
          j = i;
        }
      }
      return j;
    }
    const f = this.f;
    const jac = this.jac;
    for (let i = this.first; i <= this.last; i++) {
      const fx = f[i] / jac[i];
      if (fx > best) {
        best = fx;
        j = i;
      }
    }
    return j;
  }

  /**
   * For a unimodal posterior with a linear warp: condition on m for the exact
   * density only, and find the node modeNodeX would give by climbing from the
   * node at xStart, evaluating only the nodes passed (the log density at the
   * nodes rises to one peak and falls; ties, possible only at the top, go to
   * the first node, as in modeNodeX). Returns −1, with nothing learnt, where
   * the climb cannot vouch for that: a warp that is not linear, an end
   * node, a start outside the support, or a neighbour of the peak near the
   * cutoff (the windowed methods might not see it).
   * Leaves no posterior set, as meanAt: only exactLogDensity and the node
   * positions may be read afterwards.
   */
  climbToModeNode(m: number, xStart: number): number {
    this.pending = false;
    this.first = 0;
    this.last = -1;
    this.stamp++;
    this.measurement = m;
    this.exactAvailable = true;
    const J = this.nNodes;
    if (!this.constantJac) return -1;
    // Compared as modeNodeX compares them (log density minus log dx/du), so ties round alike.
    const lj = this.logJac[0];
    const h = (k: number) => this.evaluate(m, k, k) - lj;
    let j = this.nodeAtOrAbove(this.warp.toU(xStart));
    if (!(j >= 1 && j <= J - 2)) return -1;
    let v = h(j);
    if (!(v > -Infinity)) return -1;
    let right = h(j + 1);
    if (right > v) {
      do {
        j++;
        v = right;
        if (j === J - 1) return -1;
        right = h(j + 1);
      } while (right > v);
    } else {
      let left = h(j - 1);
      while (left >= v) {
        j--;
        v = left;
        if (j === 0) return -1;
        left = h(j - 1);
      }
    }
    // Both neighbours are evaluated now (the climb passed one, the last comparison the other).
    // A cutoff one unit inside the windowed methods' (whose peak may differ from node j's by rounding).
    const logVal = this.logVal;
    const thr = logVal[j] - (LOG_CUTOFF - 1);
    if (!(logVal[j - 1] >= thr && logVal[j + 1] >= thr)) return -1;
    return j;
  }

  /** Index of the node with the highest density. */
  peakNode(): number {
    if (this.pending) this.settle();
    let best = this.first;
    for (let j = this.first; j <= this.last; j++) if (this.f[j] > this.f[best]) best = j;
    return best;
  }

  /** The whole panels holding every node of logVal[a..b] within LOG_CUTOFF of max. */
  private massWindow(max: number, a: number, b: number): [number, number] {
    const thr = max - LOG_CUTOFF;
    // The first and last nodes above the cutoff, scanning in from each end.
    let first = a;
    while (first <= b && !(this.logVal[first] >= thr)) first++;
    if (first > b) throw new RangeError('posterior has no mass on the grid');
    let last = b;
    while (!(this.logVal[last] >= thr)) last--;
    const n = NODES_PER_PANEL;
    // Whole panels, so the Legendre transform of a panel sees all its nodes.
    return [Math.floor(first / n) * n, Math.floor(last / n) * n + n - 1];
  }

  /** Normalise the node log-densities held in logVal[a..b] (in u). */
  private normalise(max: number, a = 0, b = this.nNodes - 1): void {
    const thr = max - LOG_CUTOFF;
    const [first, last] = this.massWindow(max, a, b);
    const n = NODES_PER_PANEL;
    this.first = first;
    this.last = last;
    const logVal = this.logVal;
    const w = this.quadWeight;
    const f = this.f;
    const mass = this.mass;
    const cum = this.cum;
    let z = 0;
    for (let j = first; j <= last; j++) {
      const v = logVal[j];
      const e = v >= thr ? expNeg(max - v) : 0;
      f[j] = e;
      const mj = e * w[j];
      mass[j] = mj;
      z += mj;
    }
    const inv = 1 / z;
    const pf = first / n;
    const pl = (last + 1) / n - 1;
    let acc = 0;
    for (let p = pf; p <= pl; p++) {
      cum[p] = acc;
      let s = 0;
      const base = p * n;
      for (let j = base; j < base + n; j++) {
        f[j] *= inv;
        const mj = mass[j] * inv;
        mass[j] = mj;
        s += mj;
      }
      acc += s;
    }
    cum[pl + 1] = acc;
    this.stamp++;
  }

  get firstPanel(): number {
    return this.first / NODES_PER_PANEL;
  }
  get lastPanel(): number {
    return (this.last + 1) / NODES_PER_PANEL - 1;
  }

  private coefficients(p: number): number {
    if (this.pending) this.settle();
    const n = NODES_PER_PANEL;
    const off = p * n;
    if (this.coefStamp[p] === this.stamp) return off;
    const T = this.transform;
    const f = this.f;
    const coef = this.coef;
    for (let k = 0; k < n; k++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += T[k * n + i] * f[off + i];
      coef[off + k] = s;
    }
    this.coefStamp[p] = this.stamp;
    return off;
  }

  /** Index of the panel containing u (clamped to the window). */
  panelOf(u: number): number {
    let p = Math.floor((u - this.anchor) / this.uniformWidth) - Math.floor((this.panelStart[0] - this.anchor) / this.uniformWidth + 1e-9);
    if (p < 0) p = 0;
    if (p >= this.nPanels) p = this.nPanels - 1;
    // Clipped end panels can shift the arithmetic by one; correct locally.
    while (p > 0 && u < this.panelStart[p]) p--;
    while (p < this.nPanels - 1 && u >= this.panelStart[p] + 2 * this.panelHalf[p]) p++;
    return p;
  }

  mean(): number {
    if (this.pending) this.settle();
    let s = 0;
    for (let j = this.first; j <= this.last; j++) s += this.mass[j] * this.x[j];
    return s;
  }

  /** Posterior variance, about `mean` (the posterior mean unless given). */
  variance(mean = this.mean()): number {
    if (this.pending) this.settle();
    let v = 0;
    for (let j = this.first; j <= this.last; j++) v += this.mass[j] * (this.x[j] - mean) ** 2;
    return v;
  }

  /** Posterior cdf at u (warped coordinate). */
  cdfU(u: number): number {
    if (this.pending) this.settle();
    const pf = this.firstPanel;
    const pl = this.lastPanel;
    if (!(u > this.panelStart[pf])) return 0;
    if (u >= this.panelStart[pl] + 2 * this.panelHalf[pl]) return 1;
    const p = this.panelOf(u);
    const h = this.panelHalf[p];
    const t = (u - this.panelStart[p] - h) / h;
    const off = this.coefficients(p);
    return this.cum[p] + h * legendreIntegral(this.coef, off, NODES_PER_PANEL, t > 1 ? 1 : t);
  }

  /** Posterior cdf at x. */
  cdf(x: number): number {
    if (x <= this.x[this.first] && !(this.warp.toU(x) > this.panelStart[this.firstPanel])) return 0;
    const u = this.toUSafe(x);
    return this.cdfU(u);
  }

  private toUSafe(x: number): number {
    const u = this.warp.toU(x);
    if (Number.isNaN(u)) return -Infinity;
    return u;
  }

  /** Posterior mass of [a, b] in x. */
  massBetween(a: number, b: number): number {
    const ua = this.toUSafe(a);
    const ub = this.toUSafe(b);
    const pa = this.panelOf(ua);
    const pb = this.panelOf(ub);
    const pf = this.firstPanel;
    const pl = this.lastPanel;
    // Same panel: difference of the local integrals only, to avoid cancellation against cum.
    if (pa === pb && pa >= pf && pa <= pl && ua > this.panelStart[pa] && ub < this.panelStart[pa] + 2 * this.panelHalf[pa]) {
      const h = this.panelHalf[pa];
      const off = this.coefficients(pa);
      const ta = (ua - this.panelStart[pa] - h) / h;
      const tb = (ub - this.panelStart[pa] - h) / h;
      return h * (legendreIntegral(this.coef, off, NODES_PER_PANEL, tb) - legendreIntegral(this.coef, off, NODES_PER_PANEL, ta));
    }
    return this.cdfU(ub) - this.cdfU(ua);
  }

  /** Posterior density in u at u (0 outside the window). */
  densityU(u: number): number {
    const pf = this.firstPanel;
    const pl = this.lastPanel;
    if (u < this.panelStart[pf] || u > this.panelStart[pl] + 2 * this.panelHalf[pl]) return 0;
    const p = this.panelOf(u);
    const h = this.panelHalf[p];
    const off = this.coefficients(p);
    return legendreValue(this.coef, off, NODES_PER_PANEL, (u - this.panelStart[p] - h) / h);
  }

  /** Posterior density in x at x. */
  densityX(x: number): number {
    const u = this.toUSafe(x);
    if (!Number.isFinite(u)) return 0;
    return this.densityU(u) / this.warp.dxdu(u);
  }

  /**
   * τ-quantile of the posterior, in x. `hint`, a guess (the estimate curve's
   * prediction), starts Newton's iteration when it lies in the quantile's
   * panel; it changes only the path, not the root (to rounding).
   */
  quantile(tau: number, hint = NaN): number {
    if (this.pending) this.settle();
    return this.quantileOfMass(tau, hint);
  }

  /**
   * The τ-quantile for measurement m, without normalising the posterior (what
   * the absolute and asymmetric-linear losses' estimate curves need): one
   * pass stores the unnormalised density and the panel sums, and the quantile
   * is sought at τ times their total; the same nodes as setMeasurement then
   * quantile, equal to rounding. Leaves no posterior set: call setMeasurement
   * before anything else.
   */
  quantileAt(m: number, tau: number, hint = NaN): number {
    this.pending = false;
    const max = this.evaluateWindow(m);
    const [first, last] = this.massWindow(max, this.winA, this.winB);
    const thr = max - LOG_CUTOFF;
    const n = NODES_PER_PANEL;
    const logVal = this.logVal;
    const w = this.quadWeight;
    const f = this.f;
    const cum = this.cum;
    const pf = first / n;
    const pl = (last + 1) / n - 1;
    let acc = 0;
    for (let p = pf; p <= pl; p++) {
      cum[p] = acc;
      let s = 0;
      for (let j = p * n, e = j + n; j < e; j++) {
        const v = logVal[j];
        const fj = v >= thr ? expNeg(max - v) : 0;
        f[j] = fj;
        s += fj * w[j];
      }
      acc += s;
    }
    cum[pl + 1] = acc;
    this.first = first;
    this.last = last;
    this.stamp++;
    const q = this.quantileOfMass(tau * acc, hint);
    this.first = 0;
    this.last = -1;
    this.stamp++;
    return q;
  }

  /**
   * Where the cumulative mass reaches `target`, in the scale of cum and f
   * (normalised: target = τ), by Newton's iteration on the panel's Legendre
   * series, started from `hint` when it lies in that panel.
   */
  private quantileOfMass(tau: number, hint: number): number {
    const n = NODES_PER_PANEL;
    let lo = this.firstPanel;
    let hi = this.lastPanel;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.cum[mid] <= tau) lo = mid;
      else hi = mid - 1;
    }
    const p = lo;
    const h = this.panelHalf[p];
    const off = this.coefficients(p);
    const target = (tau - this.cum[p]) / h;
    const pm = (this.cum[p + 1] - this.cum[p]) / h;
    let a = -1;
    let b = 1;
    let t = pm > 0 ? -1 + 2 * Math.min(1, Math.max(0, target / pm)) : 0;
    if (hint === hint) {
      const th = (this.warp.toU(hint) - this.panelStart[p] - h) / h;
      if (th > -1 && th < 1) t = th;
    }
    const c = this.coef;
    // ∫P_k = (P_{k+1} − P_{k−1})/(2k+1): the division by 2k+1 done once per coefficient, not per iteration.
    const ci = COEF_INT;
    for (let k = 1; k < n; k++) ci[k] = c[off + k] * INV_ODD[k];
    for (let it = 0; it < 60; it++) {
      // The panel's cdf and density at t in one pass of the Legendre recurrence
      // (the terms of legendreIntegral and legendreValue, with reciprocals
      // multiplied where those divide: equal to rounding).
      let pm1 = 1;
      let pk = t;
      let g = c[off] * (t + 1);
      let d = c[off] + c[off + 1] * t;
      for (let k = 1; k < n; k++) {
        const pNext = REC_A[k] * t * pk - REC_B[k] * pm1;
        g += ci[k] * (pNext - pm1);
        if (k + 1 < n) d += c[off + k + 1] * pNext;
        pm1 = pk;
        pk = pNext;
      }
      g -= target;
      if (g > 0) b = t;
      else a = t;
      let next = d > 0 ? t - g / d : NaN;
      // A closed bracket: at convergence g/d is below half an ulp of t, and t, just
      // made a bracket end, is the Newton point itself (an open bracket sent those
      // to bisection, 20 to 50 steps back down to the same root).
      const newton = next >= a && next <= b;
      if (!newton) next = 0.5 * (a + b);
      const step = Math.abs(next - t);
      t = next;
      // A Newton step below 1e-9 leaves an error of order (d′/2d)·step² < 1e-16
      // (quadratic convergence; d′/d is at most ≈ 10 on a panel of 1.5 sds), so
      // the step that would only confirm it is skipped.
      if (step < 1e-15 || (newton && step < 1e-9)) break;
    }
    return this.warp.fromU(this.panelStart[p] + h + h * t);
  }

  /**
   * Replace the posterior by the distribution of x − η, η ~ N(0, sd²): what an
   * observer who expects its own motor noise weighs when choosing a response.
   * Narrow kernels are integrated by Gauss–Hermite over η against the panel
   * polynomials; wide ones by the node sum over x (each accurate in its regime).
   */
  convolveGaussian(sd: number): void {
    if (!(sd > 0)) return;
    if (this.pending) this.settle();
    const J = this.nNodes;
    const postSd = Math.sqrt(this.variance());
    const out = this.logVal;
    // Nodes that can receive mass: within 9 sd of the current window, in x.
    const xLo = this.x[this.first] - 9 * sd;
    const xHi = this.x[this.last] + 9 * sd;
    if (sd < 0.5 * postSd) {
      const gh = gaussHermite(24);
      const s2 = Math.SQRT2 * sd;
      for (let j = 0; j < J; j++) {
        const xj = this.x[j];
        if (xj < xLo || xj > xHi) {
          out[j] = -Infinity;
          continue;
        }
        let acc = 0;
        for (let k = 0; k < gh.nodes.length; k++) acc += gh.weights[k] * this.densityX(xj + s2 * gh.nodes[k]);
        const fx = acc / Math.sqrt(Math.PI);
        out[j] = fx > 0 ? Math.log(fx) + Math.log(this.warp.dxdu(this.u[j])) : -Infinity;
      }
    } else {
      const inv2 = 1 / (2 * sd * sd);
      const norm = 1 / (sd * Math.sqrt(2 * Math.PI));
      for (let j = 0; j < J; j++) {
        const xj = this.x[j];
        if (xj < xLo || xj > xHi) {
          out[j] = -Infinity;
          continue;
        }
        let acc = 0;
        for (let i = this.first; i <= this.last; i++) {
          const d = xj - this.x[i];
          acc += this.mass[i] * Math.exp(-d * d * inv2);
        }
        const fx = acc * norm;
        out[j] = fx > 0 ? Math.log(fx) + Math.log(this.warp.dxdu(this.u[j])) : -Infinity;
      }
    }
    let max = -Infinity;
    for (let j = 0; j < J; j++) if (out[j] > max) max = out[j];
    this.exactAvailable = false;
    this.normalise(max);
  }
}
