/**
 * The Bayes estimate x̂ as a function of the measurement, for one condition,
 * tabulated on a uniform grid in warped measurement coordinates v and
 * interpolated by C¹ cubic Hermite pieces. Where the estimate jumps (bimodal
 * posteriors with mode-seeking losses) the jump is located by bisection and
 * the curve is split there, so no interpolant ever bridges the gap.
 */
import type { GridPosterior } from './gridPosterior.js';
import type { Observer } from './observer.js';
import type { SensoryNoise, Warp } from './noise/types.js';
import { buildPosteriorGrid, measurementRange } from './gridFactory.js';
import { closedFormEstimate, evaluateClosedForm } from './closedForm.js';

/** Grid step in v (noise sds). */
export const CURVE_STEP = 0.25;

/** Pointwise Bayes estimate at measurement m (used by the curve and by the sampler). */
export function estimateAt(obs: Observer, post: GridPosterior, m: number, hint: number): number {
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
    const { grid, warpM } = buildPosteriorGrid(obs.prior, noise, range);
    this.post = grid;
    this.warpM = warpM;
    const h = CURVE_STEP;
    const kLo = Math.floor(warpM.toU(range.lo) / h);
    const kHi = Math.ceil(warpM.toU(range.hi) / h);
    const vs: number[] = [];
    const xs: number[] = [];
    const brk: number[] = [];
    let hint = NaN;
    const closed = closedFormEstimate(obs, noise);
    for (let k = kLo; k <= kHi; k++) {
      const v = k * h;
      const m = warpM.fromU(v);
      const e = closed ? evaluateClosedForm(closed, m) : estimateAt(obs, grid, m, hint);
      vs.push(v);
      xs.push(e);
      brk.push(0);
      hint = e;
    }
    // Jumps come from losses (bimodal posteriors) and from noise models alike
    // (scalar noise flips the estimate at m = 0), so always look for them.
    if (!closed) this.splitJumps(vs, xs, brk);
    this.v = Float64Array.from(vs);
    this.xh = Float64Array.from(xs);
    this.breakAfter = Uint8Array.from(brk);
    this.slope = new Float64Array(this.v.length);
    this.computeSlopes();
  }

  private splitJumps(vs: number[], xs: number[], brk: number[]): void {
    const n = vs.length;
    const d = (i: number) => (i >= 0 && i < n - 1 ? Math.abs(xs[i + 1] - xs[i]) : 0);
    const scale = Math.max(1e-300, ...xs.map(Math.abs));
    const jumps: number[] = [];
    for (let i = 0; i < n - 1; i++) {
      const di = d(i);
      if (di > 4 * Math.max(d(i - 1), d(i + 1)) && di > 1e-9 * scale) jumps.push(i);
    }
    // Insert from the right so indices stay valid.
    for (let q = jumps.length - 1; q >= 0; q--) {
      const i = jumps[q];
      let vL = vs[i];
      let vR = vs[i + 1];
      let xL = xs[i];
      let xR = xs[i + 1];
      for (let it = 0; it < 60 && vR - vL > 1e-11 * CURVE_STEP; it++) {
        const vm = 0.5 * (vL + vR);
        const xm = estimateAt(this.obs, this.post, this.warpM.fromU(vm), NaN);
        if (Math.abs(xm - xL) <= Math.abs(xm - xR)) {
          vL = vm;
          xL = xm;
        } else {
          vR = vm;
          xR = xm;
        }
      }
      vs.splice(i + 1, 0, vL, vR);
      xs.splice(i + 1, 0, xL, xR);
      brk.splice(i + 1, 0, 1, 0);
    }
  }

  /** Three-point (non-uniform) derivative estimates within each unbroken piece. */
  private computeSlopes(): void {
    const { v, xh, slope, breakAfter } = this;
    const n = v.length;
    for (let i = 0; i < n; i++) {
      const hasL = i > 0 && !breakAfter[i - 1] && v[i] > v[i - 1];
      const hasR = i < n - 1 && !breakAfter[i] && v[i + 1] > v[i];
      if (hasL && hasR) {
        const h0 = v[i] - v[i - 1];
        const h1 = v[i + 1] - v[i];
        const d0 = (xh[i] - xh[i - 1]) / h0;
        const d1 = (xh[i + 1] - xh[i]) / h1;
        slope[i] = (h1 * d0 + h0 * d1) / (h0 + h1);
      } else if (hasR) slope[i] = (xh[i + 1] - xh[i]) / (v[i + 1] - v[i]);
      else if (hasL) slope[i] = (xh[i] - xh[i - 1]) / (v[i] - v[i - 1]);
      else slope[i] = 0;
    }
  }

  /** Index i with v[i] ≤ v < v[i+1] (clamped). */
  segmentOf(v: number): number {
    const h = CURVE_STEP;
    let i = Math.floor((v - this.v[0]) / h);
    if (i < 0) i = 0;
    if (i > this.v.length - 2) i = this.v.length - 2;
    while (i > 0 && this.v[i] > v) i--;
    while (i < this.v.length - 2 && this.v[i + 1] <= v) i++;
    return i;
  }

  /** Cubic Hermite interpolation on segment i at v. */
  interpolate(i: number, v: number): number {
    const v0 = this.v[i];
    const h = this.v[i + 1] - v0;
    if (h <= 0) return this.xh[i];
    const t = (v - v0) / h;
    const t2 = t * t;
    const t3 = t2 * t;
    return (
      (2 * t3 - 3 * t2 + 1) * this.xh[i] +
      (t3 - 2 * t2 + t) * h * this.slope[i] +
      (-2 * t3 + 3 * t2) * this.xh[i + 1] +
      (t3 - t2) * h * this.slope[i + 1]
    );
  }
}
