/**
 * Power loss |e|^p with a free exponent p > 0: p = 2 is the squared loss and
 * p = 1 the absolute loss (nested members); p < 1 is robust but non-convex.
 *
 * The expected loss ∫ |c − x|^p f(x) dx has a kink at x = c, which spoils any
 * fixed quadrature rule. We subtract the local behaviour analytically
 * (singularity subtraction, e.g. Davis & Rabinowitz, Methods of Numerical
 * Integration, §2.12.7): on the panels around c the integrand is replaced by
 * [K(c − x) f − S] plus the exact integral of S, where S is K times the
 * first-order Taylor expansion of f at c. The remainder is smooth enough for
 * the Gauss–Legendre panels.
 * For p ≥ 1 the loss is convex and the estimate is the root of the derivative;
 * for p < 1 a coarse scan over nodes finds the global minimum first, except on
 * log-concave posteriors, where the expected loss has a single minimum and
 * the derivative's root is followed from the curve's hint (unimodalEstimate).
 */
import { z } from 'zod';
import { brentMinimize, brentRoot, safeguardedNewton } from '../../numerics/roots.js';
import { NODES_PER_PANEL, type GridPosterior } from '../gridPosterior.js';
import type { LossFunction, LossParameter } from './types.js';

export const powerSchema = z.strictObject({
  family: z.literal('power'),
  exponent: z.number().positive().max(10).describe('exponent p of |error|^p, in (0, 10]'),
});

export const powerParameters: LossParameter[] = [
  { name: 'exponent', description: 'exponent p of |error|^p', min: 0.2, max: 6, transform: 'log', typical: 2 },
];

/** |t|^a; exp(a·log|t|) costs half of Math.pow here and is as accurate (relative error ~|a·log t|·ε). */
function absPow(t: number, a: number): number {
  return t === 0 ? (a === 0 ? 1 : 0) : Math.exp(a * Math.log(Math.abs(t)));
}

/**
 * ∫ K(c − x) f(x) dx with K(e) = |e|^a (odd = false) or sgn(e)|e|^a (odd = true).
 * Singularity subtraction in x on the three panels around c, with a
 * second-order Taylor expansion of the density, so the remainder behaves like
 * |x − c|^(a+3) and the Gauss–Legendre panels integrate it accurately.
 */
/**
 * Set by kinkedExpectation for odd kernels: E|c − x|^(a−1) by the same
 * singularity subtraction (sharing the powers already computed), so that
 * a·slopeSum is the derivative of the odd expectation in c, for Newton steps.
 */
let slopeSum = 0;

export function kinkedExpectation(post: GridPosterior, c: number, a: number, odd: boolean, from = post.first, to = post.last): number {
  const n = NODES_PER_PANEL;
  const xs = post.x;
  const mass = post.mass;
  const uc = post.warp.toU(c);
  const pc = Number.isFinite(uc) ? post.panelOf(uc) : -10;
  const pLo = Math.max(post.firstPanel, pc - 1);
  const pHi = Math.min(post.lastPanel, pc + 1);
  if (pLo > pHi) {
    // c far outside the window: no kink among the nodes.
    let s = 0;
    let s1 = 0;
    for (let j = from; j <= to; j++) {
      const d = c - xs[j];
      const k = absPow(d, a);
      s += mass[j] * (odd && d < 0 ? -k : k);
      if (odd && d !== 0) s1 += (mass[j] * k) / Math.abs(d);
    }
    slopeSum = s1;
    return s;
  }
  const jLo = pLo * n;
  const jHi = pHi * n + n - 1;
  // Nodes left of the three panels lie below c, those right of them above: no sign tests.
  let below = 0;
  let below1 = 0;
  for (let j = from, e = Math.min(to, jLo - 1); j <= e; j++) {
    const d = c - xs[j];
    const k = mass[j] * Math.exp(a * Math.log(d));
    below += k;
    below1 += k / d;
  }
  let above = 0;
  let above1 = 0;
  for (let j = Math.max(from, jHi + 1); j <= to; j++) {
    const d = xs[j] - c;
    const k = mass[j] * Math.exp(a * Math.log(d));
    above += k;
    above1 += k / d;
  }
  let s = odd ? below - above : below + above;
  let s1 = below1 + above1;
  const [g0, g1, g2] = densityJet(post, c, pc, uc);
  const XA = post.warp.fromU(post.panelStart[pLo]) - c;
  const XB = post.warp.fromU(post.panelStart[pHi] + 2 * post.panelHalf[pHi]) - c;
  // The subtracted Taylor terms integrated exactly: antiderivatives of
  // |s|^b and sgn(s)|s|^b for b = a − 1 … a + 2, all from one power per end.
  const A = endPowers(XA, a, endA);
  const B = endPowers(XB, a, endB);
  if (!odd) s += g0 * (B[1] * sgn(XB) - A[1] * sgn(XA)) / (a + 1) + (g1 * (B[2] - A[2])) / (a + 2) + (0.5 * g2 * (B[3] * sgn(XB) - A[3] * sgn(XA))) / (a + 3);
  else {
    s -= (g0 * (B[1] - A[1])) / (a + 1) + (g1 * (B[2] * sgn(XB) - A[2] * sgn(XA))) / (a + 2) + (0.5 * g2 * (B[3] - A[3])) / (a + 3);
    // The slope's kernel |c − x|^(a−1) is even; its subtracted part, exactly
    // (for a < 0 the Hadamard finite part).
    if (a !== 0) s1 += (g0 * (B[0] * sgn(XB) - A[0] * sgn(XA))) / a + (g1 * (B[1] - A[1])) / (a + 1) + (0.5 * g2 * (B[2] * sgn(XB) - A[2] * sgn(XA))) / (a + 2);
  }
  const dxdu = post.jac;
  for (let j = Math.max(jLo, post.first), e = Math.min(jHi, post.last); j <= e; j++) {
    const d = c - xs[j];
    const k = absPow(d, a);
    const sd = -d; // x − c
    const taylor = g0 + g1 * sd + 0.5 * g2 * sd * sd;
    let val = k * (post.f[j] - dxdu[j] * taylor);
    if (odd && d !== 0) s1 += (post.quadWeight[j] * val) / Math.abs(d);
    if (odd && d < 0) val = -val;
    s += post.quadWeight[j] * val;
  }
  slopeSum = s1;
  return s;
}

const sgn = (t: number) => (t < 0 ? -1 : 1);

/**
 * |X|^a, |X|^(a+1), |X|^(a+2), |X|^(a+3) into `out`, from one exp and log: the
 * antiderivatives of the subtracted Taylor terms at a panel end X, as
 * sgn(X)·|X|^(b+1)/(b+1) for the kernel |s|^b and |X|^(b+1)/(b+1) for
 * sgn(s)|s|^b. endA and endB are the scratch for the two ends.
 */
const endA = new Float64Array(4);
const endB = new Float64Array(4);
function endPowers(X: number, a: number, out: Float64Array): Float64Array {
  const t = Math.abs(X);
  const p = absPow(t, a);
  out[0] = p;
  out[1] = p * t;
  out[2] = p * t * t;
  out[3] = p * t * t * t;
  return out;
}

/**
 * Density in x at c (in panel pc, at u = uc) and its first two derivatives, by
 * central differences on the panel polynomials with a step of 1e-3 panel.
 */
function densityJet(post: GridPosterior, c: number, pc: number, uc: number): [number, number, number] {
  const hx = 1e-3 * post.panelHalf[pc] * post.warp.dxdu(uc);
  const g0 = post.densityX(c);
  const gp = post.densityX(c + hx);
  const gm = post.densityX(c - hx);
  return [g0, (gp - gm) / (2 * hx), (gp - 2 * g0 + gm) / (hx * hx)];
}


/**
 * Near a = p − 1 = 0 the slope a·E|c − x|^(a−1) is a difference of large
 * terms (at p = 1 it is twice the density); Brent's method there.
 */
const NEWTON_MIN_A = 0.2;
/**
 * Newton's tolerance in posterior sds. Its early stop leaves an error below
 * 1e−3 of this (roots.ts), 1e−9 sd: far below what the likelihood can see
 * (the log-likelihood of the bench case moves by 3e−9), and small enough that
 * a change in the iteration count as parameters move leaves no visible step.
 * (It was 1e−12 of |x̂|, which cost a confirming evaluation on most
 * estimates: 2.5 kinked sums per estimate then, 1.8 now.)
 */
const NEWTON_TOL = 1e-6;

/**
 * The root of g(c) = E[sgn(c − x)|c − x|^a], a = p − 1, where the expected
 * loss is least: Newton steps with the slope a·E|c − x|^(a−1) from the same
 * subtracted sum (for a < 0 its Hadamard finite part, which the subtraction
 * gives when the analytic terms are taken as finite parts), the slope
 * changing over about a posterior sd; Brent's method near a = 0 or when
 * Newton does not settle. `centre` starts it when the hint is unusable.
 */
function derivativeRoot(post: GridPosterior, p: number, hint: number, centre: () => number): number {
  const a = p - 1;
  const lo0 = post.x[post.first];
  const hi0 = post.x[post.last];
  const close = Number.isFinite(hint) && hint > lo0 && hint < hi0;
  const start = close ? hint : centre();
  if (Math.abs(a) >= NEWTON_MIN_A) {
    const sd = Math.sqrt(post.variance(post.mean()));
    const [from, to] = heldMass(post);
    const root = safeguardedNewton((c) => [kinkedExpectation(post, c, a, true, from, to), a * slopeSum], start, lo0, hi0, NEWTON_TOL * sd, sd);
    if (Number.isFinite(root)) return root;
  }
  return bracketedRoot((c) => kinkedExpectation(post, c, a, true), start, lo0, hi0, close, start);
}

/**
 * The window's nodes from the first to the last whose mass is at least
 * HELD_MASS of the largest. The posterior's window reaches e^−40 of its peak
 * (about ±9 sds); the nodes beyond e^−30 (±7.7 sds) change E[sgn(c − x)|c − x|^a]
 * by under 1e−13·(8 sds)^a relative to sd^a — 3e−10 at the largest exponent
 * (p = 6) — and cost an exp and a log each, about a seventh of the sum.
 */
const HELD_MASS = 1e-13;
const held: [number, number] = [0, -1];
function heldMass(post: GridPosterior): [number, number] {
  const mass = post.mass;
  let peak = 0;
  for (let j = post.first; j <= post.last; j++) if (mass[j] > peak) peak = mass[j];
  const thr = HELD_MASS * peak;
  let from = post.first;
  let to = post.last;
  while (from < to && mass[from] < thr) from++;
  while (to > from && mass[to] < thr) to--;
  held[0] = from;
  held[1] = to;
  return held;
}

function convexEstimate(post: GridPosterior, p: number, hint: number): number {
  return derivativeRoot(post, p, hint, () => post.mean());
}

/**
 * The root of an increasing g in [lo0, hi0] from a start: a bracket grown
 * around the start, then Brent. Curve hints are usually within 1e-4 of the
 * root: a tight first bracket saves Brent several steps, and doubling finds a
 * wide one in a few more. `fallback` when g has no sign change.
 */
function bracketedRoot(g: (c: number) => number, start: number, lo0: number, hi0: number, close: boolean, fallback: number): number {
  let step = (close ? 0.002 : 0.05) * (hi0 - lo0);
  let a = Math.max(lo0, start - step);
  let b = Math.min(hi0, start + step);
  let ga = g(a);
  let gb = g(b);
  for (let k = 0; k < 60 && ga * gb > 0; k++) {
    step *= 2;
    if (ga > 0) {
      b = a;
      gb = ga;
      a = Math.max(lo0, start - step);
      ga = g(a);
    } else {
      a = b;
      ga = gb;
      b = Math.min(hi0, start + step);
      gb = g(b);
    }
    if (a === lo0 && b === hi0 && ga * gb > 0) break;
  }
  if (ga * gb > 0) return fallback;
  return brentRoot(g, a, b, 1e-12 * Math.max(1, Math.abs(start)), 200, { fa: ga, fb: gb });
}

/**
 * Per posterior grid and exponent, for scan nodes j: the row |x_j − x_i|^p of
 * the node-to-node kernel, and the three geometric coefficients of the
 * singularity subtraction at c = x_j. With c on a node, kinkedExpectation's
 * value is Σ_i mass_i·row_i + g0·k0 + g1·k1 + g2·k2, where g0..g2 are the
 * density and its derivatives at c and k0..k2 depend only on where the node
 * sits among the panels (the subtracted Taylor terms' exact integrals minus
 * their node sums). Every measurement of a curve shares the grid, so each
 * node's row and coefficients are computed once per curve, and a scan point
 * costs one dot product and the three densities. Only for grids small enough
 * that all rows fit comfortably in memory.
 */
const MAX_CACHED_NODES = 1500;
interface ScanNode {
  row: Float64Array;
  k0: number;
  k1: number;
  k2: number;
}
const scanCache = new WeakMap<GridPosterior, { p: number; nodes: (ScanNode | undefined)[] }>();

function scanNode(post: GridPosterior, j: number, p: number): ScanNode | null {
  if (post.nNodes > MAX_CACHED_NODES) return null;
  let cache = scanCache.get(post);
  if (!cache || cache.p !== p) {
    cache = { p, nodes: new Array(post.nNodes) };
    scanCache.set(post, cache);
  }
  let node = cache.nodes[j];
  if (!node) {
    const xs = post.x;
    const c = xs[j];
    // Entries are filled on first use (NaN until then): a scan node only ever
    // meets the nodes of the posterior windows that contain it.
    const row = new Float64Array(post.nNodes).fill(NaN);
    // The three panels around c, as kinkedExpectation takes them (unclipped).
    const n = NODES_PER_PANEL;
    const pc = Math.floor(j / n);
    const pLo = Math.max(0, pc - 1);
    const pHi = Math.min(post.nPanels - 1, pc + 1);
    const XA = post.warp.fromU(post.panelStart[pLo]) - c;
    const XB = post.warp.fromU(post.panelStart[pHi] + 2 * post.panelHalf[pHi]) - c;
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    for (let i = pLo * n; i <= pHi * n + n - 1; i++) {
      row[i] = absPow(c - xs[i], p);
      const w = post.quadWeight[i] * row[i] * post.jac[i];
      const d = xs[i] - c;
      s0 += w;
      s1 += w * d;
      s2 += w * d * d;
    }
    const A = endPowers(XA, p, endA);
    const B = endPowers(XB, p, endB);
    node = {
      row,
      k0: (B[1] * sgn(XB) - A[1] * sgn(XA)) / (p + 1) - s0,
      k1: (B[2] - A[2]) / (p + 2) - s1,
      k2: 0.5 * ((B[3] * sgn(XB) - A[3] * sgn(XA)) / (p + 3) - s2),
    };
    cache.nodes[j] = node;
  }
  return node;
}

/** kinkedExpectation(post, x_j, p, false) from the cached scan node (same value up to rounding). */
function scanExpectation(post: GridPosterior, j: number, p: number): number {
  const n = NODES_PER_PANEL;
  const pc = Math.floor(j / n);
  const node = pc - 1 >= post.firstPanel && pc + 1 <= post.lastPanel ? scanNode(post, j, p) : null;
  if (!node) return kinkedExpectation(post, post.x[j], p, false);
  const { row } = node;
  const mass = post.mass;
  let s = 0;
  const c = post.x[j];
  const xs = post.x;
  for (let i = post.first; i <= post.last; i++) {
    let k = row[i];
    if (k !== k) k = row[i] = absPow(c - xs[i], p);
    s += mass[i] * k;
  }
  const [g0, g1, g2] = densityJet(post, c, pc, post.u[j]);
  return s + g0 * node.k0 + g1 * node.k1 + g2 * node.k2;
}

/**
 * p < 1 on a log-concave posterior: the expected loss has a single minimum.
 * (The expected gain E[G(c − x)] with G(e) = M − |e|^p, cut at 0, is the
 * convolution of the posterior with a unimodal function, and a log-concave
 * density's convolution with any unimodal one is unimodal: Ibragimov, Theory
 * Probab. Appl. 1:255, 1956.) Its derivative changes sign once, so a
 * root search from the curve's hint replaces the global scan.
 */
function unimodalEstimate(post: GridPosterior, p: number, hint: number): number {
  return derivativeRoot(post, p, hint, () => post.x[post.peakNode()]);
}

function nonConvexEstimate(post: GridPosterior, p: number, hint: number): number {
  if (post.logConcave) return unimodalEstimate(post, p, hint);
  const h = (c: number) => kinkedExpectation(post, c, p, false);
  const stride = 3;
  const js: number[] = [];
  const vs: number[] = [];
  // Scan nodes are multiples of the stride, so every measurement of a curve
  // reuses the same cached rows. Where the window's first or last panel is a
  // far tail (densities below 1e-12 of the peak: no minimum of the expected
  // loss lies there) it is left out, which keeps every other scan node's panel
  // neighbourhood whole, as the cached coefficients assume; a panel cut by a
  // support end is scanned (by the uncached path).
  const n = NODES_PER_PANEL;
  const fPeak = post.f[post.peakNode()];
  const negligible = (from: number) => {
    for (let i = from; i < from + n; i++) if (post.f[i] > 1e-12 * fPeak) return false;
    return true;
  };
  const wide = post.last - post.first + 1 > 3 * n;
  const jFirst = wide && negligible(post.first) ? post.first + n : post.first;
  const jLast = wide && negligible(post.last - n + 1) ? post.last - n : post.last;
  for (let j = Math.ceil(jFirst / stride) * stride; j <= jLast; j += stride) {
    js.push(j);
    vs.push(scanExpectation(post, j, p));
  }
  // Refine every local minimum of the scan that comes close to the lowest: near
  // a switch between posterior modes two of them are nearly equal, and only
  // their refined values tell which is the global minimum.
  const minima: number[] = [];
  for (let k = 0; k < vs.length; k++) if ((k === 0 || vs[k] <= vs[k - 1]) && (k === vs.length - 1 || vs[k] <= vs[k + 1])) minima.push(k);
  minima.sort((u, w) => vs[u] - vs[w]);
  let bestX = post.x[js[minima[0]]];
  let best = Infinity;
  for (let q = 0; q < Math.min(3, minima.length); q++) {
    const k = minima[q];
    if (q > 0 && vs[k] > vs[minima[0]] + 1e-3 * Math.abs(vs[minima[0]])) break;
    const a = post.x[Math.max(post.first, js[k] - stride)];
    const b = post.x[Math.min(post.last, js[k] + stride)];
    const r = refineMinimum(post, p, h, a, b, minima.length > 1);
    if (r.value < best) {
      best = r.value;
      bestX = r.x;
    }
  }
  return bestX;
}

/**
 * The minimum of h(c) = E|c − x|^p in [a, b]: where the derivative
 * p·E[sgn(c − x)|c − x|^(p−1)] (finite for p > 0; the same singularity
 * subtraction handles its integrable kink) changes sign, a root finder needs a
 * few evaluations and lands to full precision, where a minimiser of h itself
 * needs about twice as many and stops near √ε_mach of the flat minimum.
 * h at the answer is computed only when minima are to be compared.
 */
function refineMinimum(post: GridPosterior, p: number, h: (c: number) => number, a: number, b: number, needValue: boolean): { x: number; value: number } {
  const g = (c: number) => kinkedExpectation(post, c, p - 1, true);
  const ga = g(a);
  const gb = g(b);
  if (ga < 0 && gb > 0) {
    const x = brentRoot(g, a, b, 1e-13 * Math.max(1, Math.abs(a), Math.abs(b)), 200, { fa: ga, fb: gb });
    return { x, value: needValue ? h(x) : 0 };
  }
  return brentMinimize(h, a, b, 1e-11);
}

export function powerLoss(exponent: number): LossFunction {
  return {
    family: 'power',
    params: { exponent },
    loss: (e) => Math.pow(Math.abs(e), exponent),
    estimate: (post, hint) => (exponent >= 1 ? convexEstimate(post, exponent, hint) : nonConvexEstimate(post, exponent, hint)),
    mayJump: exponent < 1,
    symmetric: true,
  };
}

export const powerFamily = {
  name: 'power' as const,
  summary: 'power loss |e|^p; p = 2 squared, p = 1 absolute; p < 1 robust',
  schema: powerSchema,
  parameters: powerParameters,
  create: (s: { exponent: number }): LossFunction => powerLoss(s.exponent),
};
