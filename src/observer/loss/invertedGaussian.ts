/**
 * Bounded inverted-Gaussian loss with width ε: L(e) = 1 − exp(−e²/(2ε²)).
 * Quadratic for small errors and saturating for large ones, the shape measured
 * for reaching errors (Körding & Wolpert 2004, PNAS). The Bayes action is the
 * argmax of the posterior smoothed by N(0, ε²); it tends to the posterior mean
 * for wide ε and to the mode for narrow ε.
 */
import { z } from 'zod';
import { gaussHermite, gaussLegendre } from '../../numerics/gaussRules.js';
import { brentMinimize, brentRoot, safeguardedNewton } from '../../numerics/roots.js';
import { NODES_PER_PANEL, type GridPosterior } from '../gridPosterior.js';
import { EXP_TABLE_MAX, expNeg } from '../../numerics/expTable.js';
import { maximiseOverNodes } from './hitOrMiss.js';
import type { LossFunction, LossParameter } from './types.js';

export const invertedGaussianSchema = z.strictObject({
  family: z.literal('inverted-gaussian'),
  width: z.number().positive().describe('width ε of the loss, > 0, in stimulus units'),
});

export const invertedGaussianParameters: LossParameter[] = [
  { name: 'width', description: 'width ε of the bounded loss', min: 1e-3, max: 1e3, transform: 'log', typical: 1 },
];

/**
 * Set by smoothedPosterior: the mean offset of the kernel-weighted posterior,
 * ∫ f(x) k(c−x) (x − c) dx / ∫ f(x) k(c−x) dx, which is the smoothed posterior's
 * log-derivative times ε². It is zero at the maximum and decreasing in c when
 * the smoothed posterior is log-concave, so a root finder on it needs a handful
 * of sums where a minimiser of the value needs dozens (and stalls near √ε_mach).
 */
let kernelOffset = NaN;
/**
 * Set with kernelOffset: the kernel-weighted variance of x. The derivative of
 * the offset in c is variance/ε² − 1 (differentiate the Gaussian weights), the
 * slope Newton's method needs, from the same sum.
 */
let kernelSpread = NaN;

/**
 * e^(logDensity − ref) by the table exp where the density is below the
 * reference (the peak node's; Math.exp above it, between nodes, and in the far
 * tail): the narrow kernel's 20–80 exact densities per sum were half its cost.
 */
function relativeDensity(logDensity: number, ref: number): number {
  const d = ref - logDensity;
  return d >= 0 && d <= EXP_TABLE_MAX ? expNeg(d) : Math.exp(-d);
}

/** ∫ f(x) exp(−(c−x)²/(2ε²)) dx up to a constant (and kernelOffset as a by-product). */
function smoothedPosterior(post: GridPosterior, c: number, width: number, narrow: boolean, ref: number): number {
  kernelOffset = NaN;
  kernelSpread = NaN;
  if (narrow) {
    // Kernel narrower than the panels: integrate the kernel by Gauss–Hermite
    // against the exact posterior density (or the panel polynomials after a
    // motor-noise convolution), which resolve the density between nodes.
    const gh = gaussHermite(20);
    const s = Math.SQRT2 * width;
    let acc = 0;
    // The 20 Hermite nodes reach ±7.6ε. Where that crosses a finite support end the
    // density jumps (uniform) or bends to 0 (gamma) there, which Gauss–Hermite cannot
    // integrate; use Gauss–Legendre on the part of [c − 8ε, c + 8ε] inside the support.
    // After a motor-noise convolution the density is smooth at the support ends and
    // reaches past them (onto the widened grid): its only edges are the window's.
    const sLo = post.warp.fromU(post.exactAvailable ? post.supportU[0] : post.panelStart[post.firstPanel]);
    const sHi = post.warp.fromU(post.exactAvailable ? post.supportU[1] : post.panelStart[post.lastPanel] + 2 * post.panelHalf[post.lastPanel]);
    const reach = 8 * width;
    let acc1 = 0;
    let acc2 = 0;
    if (c - reach < sLo || c + reach > sHi) {
      const lo = Math.max(sLo, c - reach);
      const hi = Math.min(sHi, c + reach);
      if (!(hi > lo)) return 0;
      // Four 20-point pieces: the density beside a support end is not smooth (x^(k−1) for
      // a gamma prior, panel joins after a motor-noise convolution), and two pieces, though
      // enough for the Gaussian factor alone, left errors of 1e−3–1e−2 in the log-likelihood
      // there (measured by an independent review against 64 pieces).
      const gl = gaussLegendre(20);
      const pieces = 4;
      const half = (hi - lo) / (2 * pieces);
      for (let q = 0; q < pieces; q++) {
        const mid = lo + (2 * q + 1) * half;
        for (let k = 0; k < gl.nodes.length; k++) {
          const x = mid + half * gl.nodes[k];
          const z = (c - x) / width;
          const dens = post.exactAvailable ? relativeDensity(post.exactLogDensity(x), ref) : post.densityX(x);
          const t = gl.weights[k] * dens * expNeg(0.5 * z * z);
          acc += t;
          acc1 += t * (x - c);
          acc2 += t * (x - c) * (x - c);
        }
      }
      kernelOffset = acc1 / acc;
      kernelSpread = acc2 / acc - kernelOffset * kernelOffset;
      return acc * half;
    }
    for (let k = 0; k < gh.nodes.length; k++) {
      const x = c + s * gh.nodes[k];
      const t = gh.weights[k] * (post.exactAvailable ? relativeDensity(post.exactLogDensity(x), ref) : post.densityX(x));
      acc += t;
      acc1 += t * (x - c);
      acc2 += t * (x - c) * (x - c);
    }
    kernelOffset = acc1 / acc;
    kernelSpread = acc2 / acc - kernelOffset * kernelOffset;
    return acc * s;
  }
  const inv = 1 / (2 * width * width);
  // Nodes beyond √40 ε weigh less than e^−20 (and the table exp covers the range).
  const cut = 40 * width * width;
  let acc = 0;
  let acc1 = 0;
  let acc2 = 0;
  for (let j = post.first; j <= post.last; j++) {
    const d = post.x[j] - c;
    const d2 = d * d;
    if (d2 < cut) {
      const t = post.mass[j] * expNeg(d2 * inv);
      acc += t;
      acc1 += t * d;
      acc2 += t * d2;
    }
  }
  kernelOffset = acc1 / acc;
  kernelSpread = acc2 / acc - kernelOffset * kernelOffset;
  return acc;
}

/**
 * Below this kernel width, in panel widths, the kernel is integrated against
 * the exact density instead of summed over the posterior's nodes. (Tried:
 * 0.35. The panel rule integrates the Gaussian kernel alone to 3.5e−13 there,
 * but next to a support end where the density is not smooth, a gamma prior
 * with shape 1.3, the node sum erred by 1e−2 in the log-likelihood, against
 * 1e−3 on the exact density.)
 */
export const NARROW = 0.5;

export function invertedGaussianLoss(width: number): LossFunction {
  return {
    family: 'inverted-gaussian',
    params: { width },
    loss: (e) => 1 - Math.exp((-e * e) / (2 * width * width)),
    estimate: (post, hint) => {
      // Narrow regime when ε is below NARROW panels (in x) where the posterior peaks;
      // the node sum needs several nodes per kernel width.
      const jMax = post.peakNode();
      const p = Math.floor(jMax / NODES_PER_PANEL);
      const uMid = post.panelStart[p] + post.panelHalf[p];
      const panelX = 2 * post.panelHalf[p] * post.warp.dxdu(uMid);
      const narrow = width < NARROW * panelX;
      const ref = post.exactAvailable ? post.exactLogDensity(post.x[jMax]) : 0;
      const objective = (c: number) => smoothedPosterior(post, c, width, narrow, ref);
      if (post.logConcave) {
        // A log-concave posterior smoothed by a Gaussian stays log-concave, so its
        // maximum lies between the mode and the mean: a bracketed search suffices.
        const mean = post.mean();
        const lo = Math.min(mean, post.x[Math.max(post.first, jMax - 1)]);
        const hi = Math.max(mean, post.x[Math.min(post.last, jMax + 1)]);
        const offset = (c: number) => (objective(c), kernelOffset);
        // Newton's early stop leaves an error below 1e−3 of tol (roots.ts): 1e−11 ε.
        const tol = 1e-8 * width;
        // Newton on minus the offset (increasing in c, zero at the maximum), from
        // a neighbouring measurement's estimate, kept inside [lo, hi]; its slope
        // 1 − variance/ε² comes with the offset, and changes over about ε.
        const inv2 = 1 / (width * width);
        // A hint outside the bracket (the first nodes of a curve, or a jump) starts it mid-bracket
        // rather than sending the search to Brent.
        const start = hint > lo && hint < hi ? hint : 0.5 * (lo + hi);
        const root = safeguardedNewton((c) => (objective(c), [-kernelOffset, 1 - kernelSpread * inv2]), start, lo, hi, tol, width, 12);
        if (Number.isFinite(root)) return root;
        const fa = offset(lo);
        const fb = offset(hi);
        if (fa >= 0 && fb <= 0) return brentRoot(offset, lo, hi, tol, 200, { fa, fb });
        return brentMinimize((c) => -objective(c), lo, hi, 1e-12).x;
      }
      return maximiseOverNodes(post, objective, 3);
    },
    mayJump: true,
    symmetric: true,
  };
}

export const invertedGaussianFamily = {
  name: 'inverted-gaussian' as const,
  summary: 'bounded loss 1 − exp(−e²/2ε²); mean-like for wide ε, mode-like for narrow ε',
  schema: invertedGaussianSchema,
  parameters: invertedGaussianParameters,
  create: (s: { width: number }): LossFunction => invertedGaussianLoss(s.width),
};
