/**
 * Independent reference computation of the response likelihood
 *
 *   p(r | x) = (1−λ)·∫ N(r; x̂(m), σ_m²) p(m | x) dm + λ/range,
 *
 * with the censored end masses (1−λ)·P(x̂(m) + η ≤ lower) and
 * (1−λ)·P(x̂(m) + η ≥ upper) when the scale censors and r sits at an end.
 *
 * Nothing here reuses the project's posterior grid, estimate curve, response
 * integrator or special functions. Only the model definitions are shared:
 * prior.logPdf / prior.support / prior.quantile, noise.center / noise.sdAt,
 * and the loss family name and parameters. The normal cdf comes from
 * @stdlib/math-base-special-erfc, not from src/numerics/special.ts.
 *
 * 1. x̂(m) is computed pointwise, for every measurement the m-integral asks
 *    for, from the posterior density prior(x)·N(m; center(x), sdAt(x)²), on a
 *    grid built afresh for that m:
 *      - the x-range is the likelihood's own support (|m − center(x)| ≤
 *        13·sdAt(x), solved per noise family; walked out where unbounded)
 *        intersected with the prior support, trimmed to log-density ≥ max − 32
 *        and to all but 1e-11 of the mass at each end by 160-point pilot scans
 *        (uniform in log x for positive ranges spanning more than a factor 3,
 *        zooming until the kept range holds ≥ 40 pilot points);
 *      - the posterior is then evaluated on a grid uniform in t (t = x, or
 *        t = log x for such positive ranges) whose step is 1/16 of the narrowest
 *        feature the pilot sees (curvature width of every local maximum, and the
 *        posterior sd), so posteriors at small x under scalar noise are as finely
 *        resolved as those at large x; a finite support end is a node;
 *      - the Bayes action is found by brute force on that grid:
 *          squared: Simpson mean;
 *          absolute / asymmetric-linear: τ-quantile of the cumulative trapezoid
 *            with its Euler–Maclaurin end correction (Abramowitz & Stegun 25.4.7),
 *            inverted by bisection on the cell's cubic Hermite;
 *          hit-or-miss: global maximum of the window mass C(c+ε) − C(c−ε) over
 *            all nodes, refined by bisection of its derivative g(c+ε) − g(c−ε)
 *            (g by 4-point Lagrange interpolation);
 *          inverted-gaussian: global maximum of the Gaussian-smoothed density
 *            (Simpson sum) by a node scan, refined by Illinois on its derivative;
 *          power |e|^p: product integration (Davis & Rabinowitz, Methods of
 *            Numerical Integration, 2nd ed. 1984, §2.5: the kernel |c−x|^p is
 *            integrated exactly against the piecewise-linear density), then the
 *            root of the stationarity condition for p ≥ 1 (convex), or for p < 1
 *            a scan of the objective and Illinois / golden-section search (Kiefer
 *            1953) around every near-best local minimum, on a 3× finer grid;
 *      - motor-aware observers: the posterior is convolved with N(0, σ_m²) onto
 *        an extended grid (no truncation to the prior support: the response
 *        x − η is not bounded by it), by a Simpson sum with a tabulated kernel.
 *    Checked against closed forms in test/likelihoodReference.test.ts
 *    (conjugate gaussian mean, log-normal median and mean, truncated-normal mean).
 * 2. The m-integral is adaptive Simpson (Lyness 1969, J. ACM 16:483; Richardson
 *    term (S₂ − S₁)/15) with global error control (the interval with the largest
 *    error estimate is bisected next, the strategy of QUADPACK's QAG: Piessens
 *    et al. 1983) to a relative 1e-6. The range, c ± 9 sensory sds, starts as
 *    cells of ¼ sd in a noise-adapted coordinate, split
 *      - at every jump of x̂, located once per condition by bisection on the
 *        pointwise x̂ (a cell is a candidate when its increment stands out from
 *        both neighbours and still holds a quarter of itself after four
 *        halvings; a jump is an increment that survives 49 halvings);
 *      - at every root of x̂(m) = r (the peak of N(r; x̂(m), σ_m²)) where that
 *        peak is narrower than the cell, found by the Illinois method (Dowell &
 *        Jarratt 1971, BIT 11:168) on the pointwise x̂.
 *    Cell ends and Simpson points are dyadic in those cells, so x̂ is cached by
 *    measurement value and shared between trials of a condition.
 *
 * Slow by design (it lives in tests): a few milliseconds per trial.
 */
import erfc from '@stdlib/math-base-special-erfc';
import type { Dataset, Observer } from '../../src/observer/observer.js';
import type { SensoryNoise } from '../../src/observer/noise/types.js';
import type { Distribution } from '../../src/observer/distributions/types.js';

const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);
/** Likelihood support half-width, in sensory sds (e^-84 beyond). */
const K_LIK = 13;
/** Range of the m-integral around the stimulus, in sensory sds (mass 2e-19 beyond). */
const K_M = 9;
/** Posterior log-density below max − LOG_DROP is dropped. */
const LOG_DROP = 32;
const PILOT = 160;
/** Grid steps per narrowest posterior feature (settable, to check the reference's own convergence). */
export const referenceSettings = { stepsPerFeature: 16 };
const MAX_GRID = 60000;
/** Lattice cell of the m-integral, in sensory sds. */
const CELL = 0.25;

export function Phi(z: number): number {
  return 0.5 * erfc(-z * Math.SQRT1_2);
}

// ---------------------------------------------------------------------------
// Small root finders (own implementations)

/** Illinois variant of regula falsi (Dowell & Jarratt 1971, BIT 11:168) on a sign-changing bracket. */
export function illinois(f: (x: number) => number, a: number, b: number, fa: number, fb: number, tol: number, maxIter = 200): number {
  if (fa === 0) return a;
  if (fb === 0) return b;
  let side = 0;
  for (let it = 0; it < maxIter; it++) {
    let c = (a * fb - b * fa) / (fb - fa);
    if (!(c > Math.min(a, b) && c < Math.max(a, b))) c = 0.5 * (a + b);
    const fc = f(c);
    if (fc === 0) return c;
    if ((fc < 0) === (fb < 0)) {
      b = c;
      fb = fc;
      if (side === -1) fa *= 0.5;
      side = -1;
    } else {
      a = c;
      fa = fc;
      if (side === 1) fb *= 0.5;
      side = 1;
    }
    if (Math.abs(b - a) <= tol) break;
  }
  return Math.abs(fa) < Math.abs(fb) ? a : b;
}

/** Golden-section search for a minimum on [a, b] (Kiefer 1953). */
export function goldenMin(f: (x: number) => number, a: number, b: number, tol: number): number {
  const g = (Math.sqrt(5) - 1) / 2;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let fc = f(c);
  let fd = f(d);
  for (let it = 0; it < 200 && b - a > tol; it++) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - g * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + g * (b - a);
      fd = f(d);
    }
  }
  return 0.5 * (a + b);
}

// ---------------------------------------------------------------------------
// Pointwise posterior on a fine uniform grid

/** Where the likelihood N(m; center(x), sdAt(x)²) is above e^(−K²/2) of its scale, solved per family. */
function likelihoodRegion(noise: SensoryNoise, m: number): [number, number] {
  const K = K_LIK;
  const p = noise as unknown as { sd: number; weber: number; sd0: number };
  switch (noise.family) {
    case 'constant':
      return [m - K * p.sd, m + K * p.sd];
    case 'log-gaussian':
      return [Math.exp(m - K * p.sd), Math.exp(m + K * p.sd)];
    case 'scalar': {
      // x > 0 and |m − x| ≤ K·w·x
      const kw = K * p.weber;
      let lo = m > 0 ? m / (1 + kw) : 0;
      if (m < 0) lo = kw > 1 ? -m / (kw - 1) : Infinity;
      const hi = kw < 1 ? (m > 0 ? m / (1 - kw) : -Infinity) : Infinity;
      return [lo, hi];
    }
    case 'generalized': {
      // (m − x)² ≤ K²(σ₀² + w²x²)  ⇔  A x² − 2 m x + (m² − K²σ₀²) ≤ 0
      const A = 1 - K * K * p.weber * p.weber;
      if (A <= 0) return [-Infinity, Infinity];
      const disc = m * m - A * (m * m - K * K * p.sd0 * p.sd0);
      const sq = Math.sqrt(Math.max(0, disc));
      return [(m - sq) / A, (m + sq) / A];
    }
    default:
      return [-Infinity, Infinity];
  }
}

export interface PosteriorGrid {
  /** Nodes, increasing: uniform in t, t_i = t0 + i·ht, where x = t (linear) or x = e^t (log). */
  n: number;
  useLog: boolean;
  t0: number;
  ht: number;
  x: Float64Array;
  /** Density in t at the nodes (normalised). */
  ft: Float64Array;
  /** Posterior density in x at the nodes (normalised by the trapezoid rule in x). */
  g: Float64Array;
  /** Simpson weights in t times dx/dt: Σ W·g·φ(x) ≈ ∫ φ(x) g(x) dx to high order. */
  W: Float64Array;
  /**
   * Cumulative at the nodes: trapezoid in t with the Euler–Maclaurin end
   * correction −ht²/12·(f′(t) − f′(t0)) (Abramowitz & Stegun 25.4.7), so O(ht⁴); C[n] = 1.
   */
  C: Float64Array;
  /** Grid steps per narrowest posterior feature (a stride for searches). */
  steps: number;
  /** True when the nodes are uniform in x (required by convolveGrid). */
  uniformX: boolean;
  bulk?: [number, number];
}

export interface GridOptions {
  /** Upper bound on the node spacing in x (e.g. a fraction of a loss width or of the motor sd). */
  maxStep?: number;
  /** Multiplies the steps per feature (finer grids where an estimator converges only as O(h²)). */
  refine?: number;
  /** Force nodes uniform in x. */
  linear?: boolean;
}

interface Pilot {
  useLog: boolean;
  tLo: number;
  dt: number;
  lp: Float64Array;
  max: number;
  i0: number;
  i1: number;
  /** Retained range in x, padded by one pilot step. */
  a: number;
  b: number;
  /** Largest x below which all but 1e-6 of the mass lies (sets the step of log grids). */
  xBulk: number;
}

/**
 * PILOT points over [lo, hi], uniform in log x for wide positive ranges, else in
 * x; keeps the range where the log density is ≥ max − LOG_DROP and then trims
 * each end that holds less than 1e-11 of the (pilot) mass, which drops the flat
 * e^-22-level tails that wide Weber noise gives a posterior (their effect on any
 * estimate is below 1e-9 of the range).
 */
function pilotScan(logPost: (x: number) => number, lo: number, hi: number, linear: boolean): Pilot {
  const useLog = !linear && lo > 0 && hi / lo > 3;
  const tLo = useLog ? Math.log(lo) : lo;
  const tHi = useLog ? Math.log(hi) : hi;
  const dt = (tHi - tLo) / (PILOT - 1);
  const tx = (t: number) => (useLog ? Math.exp(t) : t);
  const lp = new Float64Array(PILOT);
  let max = -Infinity;
  for (let i = 0; i < PILOT; i++) {
    const x = i === 0 ? lo : i === PILOT - 1 ? hi : tx(tLo + i * dt);
    // density in t
    lp[i] = logPost(x) + (useLog ? Math.log(x) : 0);
    if (lp[i] > max) max = lp[i];
  }
  if (!Number.isFinite(max)) throw new Error(`reference: posterior vanishes on the pilot over [${lo}, ${hi}]`);
  let i0 = 0;
  while (lp[i0] < max - LOG_DROP) i0++;
  let i1 = PILOT - 1;
  while (lp[i1] < max - LOG_DROP) i1--;
  let tot = 0;
  for (let i = i0; i <= i1; i++) tot += Math.exp(lp[i] - max);
  let acc = 0;
  while (i0 < i1 && (acc += Math.exp(lp[i0] - max)) < 1e-11 * tot) i0++;
  acc = 0;
  while (i1 > i0 && (acc += Math.exp(lp[i1] - max)) < 1e-11 * tot) i1--;
  let iq = i1;
  acc = 0;
  while (iq > i0 && (acc += Math.exp(lp[iq] - max)) < 1e-6 * tot) iq--;
  const a = i0 === 0 ? lo : tx(tLo + (i0 - 1) * dt);
  const b = i1 === PILOT - 1 ? hi : tx(tLo + (i1 + 1) * dt);
  return { useLog, tLo, dt, lp, max, i0, i1, a, b, xBulk: tx(tLo + Math.min(PILOT - 1, iq + 1) * dt) };
}

/** Narrowest length scale in t: the posterior sd and the curvature width of every local maximum. */
function pilotFeature(logPost: (x: number) => number, p: Pilot): number {
  const { useLog, tLo, dt, lp, max, i0, i1 } = p;
  let w0 = 0;
  let w1 = 0;
  let w2 = 0;
  for (let i = i0; i <= i1; i++) {
    const t = tLo + i * dt;
    const w = Math.exp(lp[i] - max);
    w0 += w;
    w1 += w * t;
    w2 += w * t * t;
  }
  const mean = w1 / w0;
  let feature = Math.sqrt(Math.max(w2 / w0 - mean * mean, 0));
  if (!(feature > 0)) feature = dt;
  for (let i = Math.max(i0, 1); i <= Math.min(i1, PILOT - 2); i++) {
    if (!(lp[i] >= lp[i - 1] && lp[i] >= lp[i + 1])) continue;
    let curv = -(lp[i + 1] - 2 * lp[i] + lp[i - 1]) / (dt * dt);
    if (lp[i] - Math.max(lp[i - 1], lp[i + 1]) > 2) {
      // Under-resolved peak: zoom once.
      const zt0 = tLo + (i - 1) * dt;
      const zd = (2 * dt) / 200;
      let best = -Infinity;
      let kb = 0;
      const zl = new Float64Array(201);
      for (let k = 0; k <= 200; k++) {
        const x = useLog ? Math.exp(zt0 + k * zd) : zt0 + k * zd;
        zl[k] = logPost(x) + (useLog ? Math.log(x) : 0);
        if (zl[k] > best) {
          best = zl[k];
          kb = k;
        }
      }
      kb = Math.min(199, Math.max(1, kb));
      curv = -(zl[kb + 1] - 2 * zl[kb] + zl[kb - 1]) / (zd * zd);
    }
    if (curv > 0) feature = Math.min(feature, 1 / Math.sqrt(curv));
  }
  return feature;
}

/** The posterior of x given m, on a fine grid built from scratch for this m. */
export function posteriorGrid(prior: Distribution, noise: SensoryNoise, m: number, opts: GridOptions = {}): PosteriorGrid {
  const logPost = (x: number): number => {
    const lp = prior.logPdf(x);
    if (lp === -Infinity) return -Infinity;
    const s = noise.sdAt(x);
    const z = (m - noise.center(x)) / s;
    return lp - 0.5 * z * z - Math.log(s);
  };
  const [s0, s1] = prior.support;
  let [lo, hi] = likelihoodRegion(noise, m);
  lo = Math.max(lo, s0);
  hi = Math.min(hi, s1);
  if (!(hi > lo)) {
    lo = s0;
    hi = s1;
  }
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) {
    // Unbounded side (wide Weber noise, or no likelihood bound): walk out until
    // the log posterior is 120 below a reference point and past the prior's bulk.
    const cands = [noise.family === 'log-gaussian' ? Math.exp(m) : m, prior.quantile(0.5), prior.mean()];
    let x0 = NaN;
    let ref = -Infinity;
    for (const c0 of cands) {
      const c = Math.min(Math.max(c0, Number.isFinite(lo) ? lo : c0), Number.isFinite(hi) ? hi : c0);
      const v = logPost(c);
      if (v > ref) {
        ref = v;
        x0 = c;
      }
    }
    if (!Number.isFinite(ref)) throw new Error(`reference: no finite posterior density for m = ${m}`);
    const qHi = prior.quantile(1 - 1e-13);
    const qLo = prior.quantile(1e-13);
    if (!Number.isFinite(hi)) {
      let d = Math.max(1, Math.abs(x0));
      let x = x0 + d;
      for (let i = 0; i < 200 && !(logPost(x) < ref - 120 && !(x < qHi)); i++) x = x0 + (d *= 2);
      hi = x;
    }
    if (!Number.isFinite(lo)) {
      let d = Math.max(1, Math.abs(x0));
      let x = x0 - d;
      for (let i = 0; i < 200 && !(logPost(x) < ref - 120 && !(x > qLo)); i++) x = x0 - (d *= 2);
      lo = x;
    }
  }
  const linear = opts.linear === true;
  // A range starting at 0 is scanned from the prior's 1e-15 quantile, so that it
  // can be scanned in log x; the grid still starts at 0 if that end is retained.
  const q0 = lo === 0 ? prior.quantile(1e-15) : 0;
  const scanLo = lo === 0 && q0 > 0 && q0 < hi ? q0 : lo;
  // Pilot scans: zoom until the retained range holds at least 40 pilot points.
  let pilot = pilotScan(logPost, scanLo, hi, linear);
  for (let z = 0; z < 6 && pilot.i1 - pilot.i0 < 40; z++) pilot = pilotScan(logPost, pilot.a, pilot.b, linear);
  let { a, b, useLog } = pilot;
  if (a === scanLo && scanLo !== lo && prior.logPdf(lo) > -Infinity) {
    // The prior has a density at 0 (uniform, gamma with shape 1): the posterior
    // may be truncated there, so the grid must start exactly at 0. (Where the
    // prior density vanishes at 0, [0, q0] holds a negligible mass.)
    a = lo;
    useLog = false;
  }
  const feature = pilotFeature(logPost, pilot);
  const tA = useLog ? Math.log(a) : a;
  const tB = useLog ? Math.log(b) : b;
  let ht = feature / (referenceSettings.stepsPerFeature * (opts.refine ?? 1));
  if (opts.maxStep !== undefined) ht = Math.min(ht, useLog ? opts.maxStep / pilot.xBulk : opts.maxStep);
  let n = Math.ceil((tB - tA) / ht);
  if (n < 200) n = 200;
  if (n > MAX_GRID) n = MAX_GRID;
  if (n % 2) n++;
  ht = (tB - tA) / n;
  const x = new Float64Array(n + 1);
  const g = new Float64Array(n + 1);
  const W = new Float64Array(n + 1);
  let gm = -Infinity;
  for (let i = 0; i <= n; i++) {
    x[i] = i === 0 ? a : i === n ? b : useLog ? Math.exp(tA + i * ht) : tA + i * ht;
    g[i] = logPost(x[i]);
    if (g[i] > gm) gm = g[i];
    W[i] = simpsonWeight(i, n, ht) * (useLog ? x[i] : 1);
  }
  for (let i = 0; i <= n; i++) g[i] = Math.exp(g[i] - gm);
  return finishGrid(useLog, tA, ht, x, g, W, (feature / ht) | 0 || 1);
}

function finishGrid(useLog: boolean, t0: number, ht: number, x: Float64Array, g: Float64Array, W: Float64Array, steps: number): PosteriorGrid {
  const n = x.length - 1;
  const ft = new Float64Array(n + 1);
  for (let i = 0; i <= n; i++) ft[i] = useLog ? g[i] * x[i] : g[i];
  const d = (i: number) =>
    i === 0 ? (-3 * ft[0] + 4 * ft[1] - ft[2]) / (2 * ht) : i === n ? (3 * ft[n] - 4 * ft[n - 1] + ft[n - 2]) / (2 * ht) : (ft[i + 1] - ft[i - 1]) / (2 * ht);
  const C = new Float64Array(n + 1);
  let T = 0;
  const d0 = d(0);
  for (let i = 1; i <= n; i++) {
    T += 0.5 * ht * (ft[i - 1] + ft[i]);
    C[i] = T - ((ht * ht) / 12) * (d(i) - d0);
  }
  const z = C[n];
  for (let i = 0; i <= n; i++) {
    g[i] /= z;
    ft[i] /= z;
    C[i] /= z;
  }
  return { n, useLog, t0, ht, x, ft, g, W, C, steps, uniformX: !useLog };
}

/** Composite Simpson weight of node i of n (n even), step h. */
function simpsonWeight(i: number, n: number, h: number): number {
  if (i === 0 || i === n) return h / 3;
  return i % 2 ? (4 * h) / 3 : (2 * h) / 3;
}

/** Distribution of x − η, η ~ N(0, σ²), on the same (uniform) step, extended by 9σ each side (Simpson sum, tabulated kernel). */
export function convolveGrid(p: PosteriorGrid, sigma: number): PosteriorGrid {
  if (!p.uniformX) throw new Error('reference: convolveGrid needs a grid uniform in x');
  const { n } = p;
  const h = (p.x[n] - p.x[0]) / n;
  const M = Math.ceil((9 * sigma) / h);
  const kern = new Float64Array(2 * M + 1);
  for (let d = -M; d <= M; d++) {
    const z = (d * h) / sigma;
    kern[d + M] = (Math.exp(-0.5 * z * z) * INV_SQRT_2PI) / sigma;
  }
  const wf = new Float64Array(n + 1);
  for (let i = 0; i <= n; i++) wf[i] = p.W[i] * p.g[i];
  let N = n + 2 * M;
  if (N % 2) N++;
  const a = p.x[0] - M * h;
  const x = new Float64Array(N + 1);
  const g = new Float64Array(N + 1);
  const W = new Float64Array(N + 1);
  for (let j = 0; j <= N; j++) {
    x[j] = a + j * h;
    W[j] = simpsonWeight(j, N, h);
    // output node j sits at input index j − M
    let s = 0;
    const iLo = Math.max(0, j - 2 * M);
    const iHi = Math.min(n, j);
    for (let i = iLo; i <= iHi; i++) s += wf[i] * kern[j - i];
    g[j] = s;
  }
  return finishGrid(false, a, h, x, g, W, Math.max(1, Math.round(Math.hypot(p.steps, sigma / h))));
}

/** Index i with x[i] ≤ y < x[i+1] (clamped to 0..n−1). */
function cellOf(p: PosteriorGrid, y: number): number {
  const t = p.useLog ? (y > 0 ? Math.log(y) : -Infinity) : y;
  let i = Math.floor((t - p.t0) / p.ht);
  if (!(i >= 0)) i = 0;
  if (i > p.n - 1) i = p.n - 1;
  while (i > 0 && p.x[i] > y) i--;
  while (i < p.n - 1 && p.x[i + 1] <= y) i++;
  return i;
}

function tOf(p: PosteriorGrid, y: number): number {
  return p.useLog ? Math.log(y) : y;
}

/** Density in x at y: 4-point Lagrange interpolation of the density in t (0 outside the grid). */
function gAt(p: PosteriorGrid, y: number): number {
  const { ft, n } = p;
  if (y < p.x[0] || y > p.x[n]) return 0;
  const s = (tOf(p, y) - p.t0) / p.ht;
  const i = cellOf(p, y);
  const j0 = Math.max(0, Math.min(n - 3, i - 1));
  let v = 0;
  for (let j = j0; j < j0 + 4; j++) {
    let l = 1;
    for (let k = j0; k < j0 + 4; k++) if (k !== j) l *= (s - k) / (j - k);
    v += l * ft[j];
  }
  return p.useLog ? v / y : v;
}

/** Cumulative at local coordinate u ∈ [0, 1] of cell i: cubic Hermite with slopes = density in t. */
function cumCell(p: PosteriorGrid, i: number, u: number): number {
  const { C, ft, ht } = p;
  const u2 = u * u;
  const u3 = u2 * u;
  return (2 * u3 - 3 * u2 + 1) * C[i] + (u3 - 2 * u2 + u) * ht * ft[i] + (-2 * u3 + 3 * u2) * C[i + 1] + (u3 - u2) * ht * ft[i + 1];
}

/** Posterior cdf at y. */
function cumAt(p: PosteriorGrid, y: number): number {
  if (y <= p.x[0]) return 0;
  if (y >= p.x[p.n]) return 1;
  const i = cellOf(p, y);
  let u = (tOf(p, y) - (p.t0 + i * p.ht)) / p.ht;
  if (u < 0) u = 0;
  if (u > 1) u = 1;
  return cumCell(p, i, u);
}

function gridMean(p: PosteriorGrid): number {
  let s0 = 0;
  let s1 = 0;
  for (let i = 0; i <= p.n; i++) {
    const w = p.W[i] * p.g[i];
    s0 += w;
    s1 += w * p.x[i];
  }
  return s1 / s0;
}

function gridQuantile(p: PosteriorGrid, tau: number): number {
  const { C } = p;
  let lo = 0;
  let hi = p.n;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (C[mid] <= tau) lo = mid;
    else hi = mid;
  }
  const i = lo;
  // Bisection on the cell's Hermite cubic (monotone for a positive density).
  let a = 0;
  let b = 1;
  for (let it = 0; it < 60; it++) {
    const u = 0.5 * (a + b);
    if (cumCell(p, i, u) < tau) a = u;
    else b = u;
  }
  const t = p.t0 + (i + 0.5 * (a + b)) * p.ht;
  return p.useLog ? Math.exp(t) : t;
}

/** Local maxima of node values, best first (up to k, within `rel` of the best). */
function topLocalMaxima(vals: Float64Array, k: number, rel: number): number[] {
  const idx: number[] = [];
  const n = vals.length;
  for (let i = 0; i < n; i++) {
    const l = i > 0 ? vals[i - 1] : -Infinity;
    const r = i < n - 1 ? vals[i + 1] : -Infinity;
    if (vals[i] >= l && vals[i] >= r && vals[i] > -Infinity) idx.push(i);
  }
  idx.sort((u, v) => vals[v] - vals[u]);
  const best = vals[idx[0]];
  return idx.filter((i, q) => q < k && vals[i] >= best - rel * Math.abs(best));
}

/** Centre of the window [c−ε, c+ε] of largest mass: node scan, then bisection of g(c+ε) − g(c−ε). */
function hitOrMiss(p: PosteriorGrid, eps: number): number {
  const mass = (c: number) => cumAt(p, c + eps) - cumAt(p, c - eps);
  const vals = new Float64Array(p.n + 1);
  for (let i = 0; i <= p.n; i++) vals[i] = mass(p.x[i]);
  const d = (c: number) => gAt(p, c + eps) - gAt(p, c - eps);
  let bestX = p.x[0];
  let bestV = -Infinity;
  for (const i of topLocalMaxima(vals, 6, 1e-2)) {
    let a = p.x[Math.max(0, i - 1)];
    let b = p.x[Math.min(p.n, i + 1)];
    let c: number;
    if (d(a) > 0 && d(b) < 0) {
      for (let it = 0; it < 100 && b - a > 1e-15 * Math.max(1, Math.abs(a)); it++) {
        const mid = 0.5 * (a + b);
        if (d(mid) > 0) a = mid;
        else b = mid;
      }
      c = 0.5 * (a + b);
    } else c = goldenMin((u) => -mass(u), a, b, 1e-13 * Math.max(1, Math.abs(a)));
    const v = mass(c);
    if (v > bestV) {
      bestV = v;
      bestX = c;
    }
  }
  return bestX;
}

/** Argmax of the posterior smoothed by N(0, width²) (Simpson sum), by a scan and Illinois on the derivative. */
function invertedGaussian(p: PosteriorGrid, width: number): number {
  const { n, x, g, W } = p;
  const inv = 1 / (2 * width * width);
  const S = (c: number, deriv: boolean): number => {
    const i0 = cellOf(p, c - 9 * width);
    const i1 = Math.min(n, cellOf(p, c + 9 * width) + 1);
    let s = 0;
    for (let i = i0; i <= i1; i++) {
      const dd = x[i] - c;
      const e = W[i] * g[i] * Math.exp(-dd * dd * inv);
      s += deriv ? e * dd : e;
    }
    return s;
  };
  // Candidates: nodes of the bulk, a third of the narrower of the kernel and the posterior feature apart.
  const [b0, b1] = bulkRange(p);
  let stride = Math.max(1, Math.floor(p.steps / 3));
  for (let i = b0; i < b1; i += stride) {
    const kSteps = Math.floor(width / (3 * (x[i + 1] - x[i])));
    if (kSteps < stride) stride = Math.max(1, kSteps);
  }
  const cand: number[] = [];
  for (let i = b0; i <= b1; i += stride) cand.push(i);
  if (cand[cand.length - 1] !== b1) cand.push(b1);
  const vals = Float64Array.from(cand, (i) => S(x[i], false));
  let bestX = x[0];
  let bestV = -Infinity;
  for (const q of topLocalMaxima(vals, 6, 1e-2)) {
    const a = x[cand[Math.max(0, q - 1)]];
    const b = x[cand[Math.min(cand.length - 1, q + 1)]];
    const fa = S(a, true);
    const fb = S(b, true);
    let c: number;
    if (fa > 0 && fb < 0) c = illinois((u) => S(u, true), a, b, fa, fb, 1e-13 * Math.max(1, Math.abs(a)));
    else c = goldenMin((u) => -S(u, false), a, b, 1e-12 * Math.max(1, Math.abs(a)));
    const v = S(c, false);
    if (v > bestV) {
      bestV = v;
      bestX = c;
    }
  }
  return bestX;
}

/** Node range outside which the density is below 1e-15 of its maximum (cells there contribute < 1e-12). */
function bulkRange(p: PosteriorGrid): [number, number] {
  if (p.bulk) return p.bulk;
  let gmax = 0;
  for (let i = 0; i <= p.n; i++) if (p.g[i] > gmax) gmax = p.g[i];
  let i0 = 0;
  while (i0 < p.n - 1 && p.g[i0 + 1] < 1e-15 * gmax) i0++;
  let i1 = p.n;
  while (i1 > i0 + 1 && p.g[i1 - 1] < 1e-15 * gmax) i1--;
  p.bulk = [i0, i1];
  return p.bulk;
}

/**
 * ∫ K(y − c) g(y) dy by product integration against the piecewise-linear g, with
 * K(t) = |t|^q (odd = false) or sgn(t)|t|^q (odd = true), q > −1: on each cell
 * g = α + β·t exactly, and ∫|t|^q, ∫t|t|^q have closed antiderivatives.
 */
function powerMoment(p: PosteriorGrid, c: number, q: number, odd: boolean): number {
  const { x, g } = p;
  const [i0, i1] = bulkRange(p);
  const q1 = q + 1;
  const q2 = q + 2;
  let s = 0;
  let t0 = x[i0] - c;
  let P0 = Math.pow(Math.abs(t0), q1); // |t|^(q+1)
  for (let i = i0; i < i1; i++) {
    const t1 = x[i + 1] - c;
    const P1 = Math.pow(Math.abs(t1), q1);
    const beta = (g[i + 1] - g[i]) / (t1 - t0);
    const alpha = g[i] - beta * t0;
    const sg0 = t0 < 0 ? -1 : 1;
    const sg1 = t1 < 0 ? -1 : 1;
    if (!odd) s += (alpha * (sg1 * P1 - sg0 * P0)) / q1 + (beta * (Math.abs(t1) * P1 - Math.abs(t0) * P0)) / q2;
    else s += (alpha * (P1 - P0)) / q1 + (beta * (sg1 * Math.abs(t1) * P1 - sg0 * Math.abs(t0) * P0)) / q2;
    t0 = t1;
    P0 = P1;
  }
  return s;
}

function powerEstimate(p: PosteriorGrid, pw: number): number {
  const lo = p.x[0];
  const hi = p.x[p.n];
  const tol = 1e-13 * Math.max(1, Math.abs(lo), Math.abs(hi));
  // Stationarity: G(c) = E sgn(x − c)|x − c|^(p−1) = 0 (decreasing in c for p ≥ 1).
  const G = (c: number) => powerMoment(p, c, pw - 1, true);
  if (pw >= 1) {
    const m0 = gridMean(p);
    const j = cellOf(p, m0);
    const step = Math.max(p.x[Math.min(p.n, j + p.steps)] - p.x[j], 1e-12);
    let a = m0;
    let ga = G(a);
    let b = a;
    let gb = ga;
    for (let k = 0; k < 200 && ga * gb > 0; k++) {
      if (ga > 0) {
        a = b;
        ga = gb;
        b = Math.min(hi, b + 0.25 * step * 2 ** Math.min(k, 40));
        gb = G(b);
      } else {
        b = a;
        gb = ga;
        a = Math.max(lo, a - 0.25 * step * 2 ** Math.min(k, 40));
        ga = G(a);
      }
    }
    return illinois(G, a, b, ga, gb, tol);
  }
  // p < 1: non-convex; scan the objective over the posterior bulk, then Illinois on G.
  const O = (c: number) => powerMoment(p, c, pw, false);
  const stride = Math.max(1, Math.floor(p.steps / 2));
  const gmax = p.g.reduce((u, v) => Math.max(u, v), 0);
  const cand: number[] = [];
  for (let i = 0; i <= p.n; i += stride) if (p.g[i] > 1e-8 * gmax) cand.push(i);
  const vals = Float64Array.from(cand, (i) => -O(p.x[i]));
  let bestX = lo;
  let bestV = Infinity;
  for (const q of topLocalMaxima(vals, 4, 1e-2)) {
    const a = p.x[cand[Math.max(0, q - 1)]];
    const b = p.x[cand[Math.min(cand.length - 1, q + 1)]];
    const ga = G(a);
    const gb = G(b);
    const c = ga > 0 && gb < 0 ? illinois(G, a, b, ga, gb, tol) : goldenMin(O, a, b, tol);
    const v = O(c);
    if (v < bestV) {
      bestV = v;
      bestX = c;
    }
  }
  return bestX;
}

/** Reference Bayes estimate x̂(m), computed from scratch. */
export function referenceEstimate(obs: Observer, noise: SensoryNoise, m: number): number {
  const { loss } = obs;
  const par = loss.params;
  const motor = obs.motorAware ? obs.motorSd : 0;
  const needConv = motor > 0 && loss.family !== 'squared' && loss.family !== 'inverted-gaussian';
  const maxSteps: number[] = [];
  // The hit-or-miss window needs no step bound (its mass comes from the O(h⁴)
  // cumulative); the smoothing kernel of the inverted-gaussian loss must be resolved.
  if (par.width !== undefined) maxSteps.push(Math.sqrt(par.width ** 2 + motor ** 2) / 4);
  if (needConv) maxSteps.push(motor / 3);
  // p < 1: the product-integration error O(h²) meets a |t|^(p−1) kernel in the
  // stationarity condition; three times finer grids keep x̂ within ~1e-5.
  const refine = loss.family === 'power' && par.exponent < 1 ? 3 : 1;
  const post = posteriorGrid(obs.prior, noise, m, { maxStep: maxSteps.length ? Math.min(...maxSteps) : undefined, linear: needConv, refine });
  switch (loss.family) {
    case 'squared':
      // The mean of x − η equals the posterior mean.
      return gridMean(post);
    case 'inverted-gaussian':
      // Smoothing x − η by N(0, ε²) is smoothing x by N(0, ε² + σ_m²).
      return invertedGaussian(post, Math.sqrt(par.width ** 2 + motor ** 2));
    default:
      break;
  }
  const q = needConv ? convolveGrid(post, motor) : post;
  switch (loss.family) {
    case 'absolute':
      return gridQuantile(q, 0.5);
    case 'asymmetric-linear':
      return gridQuantile(q, par.level);
    case 'hit-or-miss':
      return hitOrMiss(q, par.window);
    case 'power':
      return powerEstimate(q, par.exponent);
    default:
      throw new Error(`reference: no estimator for loss family '${loss.family}'`);
  }
}

// ---------------------------------------------------------------------------
// The m-integral

/** A monotone coordinate v(m) in which the sensory sd is about one unit (cells of the m-integral). */
interface Coord {
  v(m: number): number;
  m(v: number): number;
}

function coordinate(noise: SensoryNoise, xMin: number): Coord {
  const p = noise as unknown as { sd: number; weber: number; sd0: number };
  switch (noise.family) {
    case 'constant':
    case 'log-gaussian':
      return { v: (m) => m / p.sd, m: (v) => v * p.sd };
    case 'scalar': {
      const a = p.weber * Math.max(xMin, 1e-12);
      return { v: (m) => Math.asinh(m / a) / p.weber, m: (v) => a * Math.sinh(p.weber * v) };
    }
    case 'generalized':
      if (p.weber > 0) return { v: (m) => Math.asinh((p.weber * m) / p.sd0) / p.weber, m: (v) => (p.sd0 * Math.sinh(p.weber * v)) / p.weber };
      return { v: (m) => m / p.sd0, m: (v) => v * p.sd0 };
    default: {
      const s = noise.sdAt(xMin);
      return { v: (m) => m / s, m: (v) => v * s };
    }
  }
}

interface Jump {
  m: number;
  left: number;
  right: number;
}

interface Seg {
  a: number;
  b: number;
  fa: number;
  fm: number;
  fb: number;
  S: number;
  fl: number;
  fr: number;
  value: number;
  err: number;
}

/** Max-heap on err. */
class Heap {
  items: Seg[] = [];
  push(s: Seg): void {
    const it = this.items;
    it.push(s);
    let i = it.length - 1;
    while (i > 0) {
      const p = (i - 1) >> 1;
      if (it[p].err >= it[i].err) break;
      [it[p], it[i]] = [it[i], it[p]];
      i = p;
    }
  }
  pop(): Seg {
    const it = this.items;
    const top = it[0];
    const last = it.pop()!;
    if (it.length) {
      it[0] = last;
      let i = 0;
      for (;;) {
        const l = 2 * i + 1;
        const r = l + 1;
        let m = i;
        if (l < it.length && it[l].err > it[m].err) m = l;
        if (r < it.length && it[r].err > it[m].err) m = r;
        if (m === i) break;
        [it[m], it[i]] = [it[i], it[m]];
        i = m;
      }
    }
    return top;
  }
}

export interface ReferenceStats {
  estimates: number;
  integrandEvaluations: number;
  jumps: number;
}

/** Kernel: 0 density at r, 1 P(x̂ + η ≤ r), 2 P(x̂ + η ≥ r). */
type Kernel = 0 | 1 | 2;

export class ReferenceCondition {
  private readonly cache = new Map<number, number>();
  readonly jumps: Jump[] = [];
  private readonly coord: Coord;
  private readonly kLo: number;
  private readonly kHi: number;
  stats: ReferenceStats = { estimates: 0, integrandEvaluations: 0, jumps: 0 };
  /** Relative tolerance of the m-integral (error estimate of the Richardson-corrected sum). */
  relTol = 1e-6;

  constructor(readonly obs: Observer, readonly noise: SensoryNoise, xLo: number, xHi: number) {
    this.coord = coordinate(noise, xLo);
    const { kLo, kHi } = this.cellRange(xLo, xHi);
    this.kLo = kLo;
    this.kHi = kHi;
    const mk = (k: number) => this.coord.m(k * CELL);
    const xs: number[] = [];
    for (let k = kLo; k <= kHi; k++) xs.push(this.xhat(mk(k)));
    this.findJumps(kLo, kHi, xs);
    this.stats.jumps = this.jumps.length;
  }

  /** Lattice cells covering c(x) ± K_M sd(x) for x in [xLo, xHi]. */
  private cellRange(xLo: number, xHi: number): { kLo: number; kHi: number } {
    const n = this.noise;
    const ends = [xLo, xHi].flatMap((x) => [n.center(x) - K_M * n.sdAt(x), n.center(x) + K_M * n.sdAt(x)]);
    const vs = ends.map((m) => this.coord.v(m));
    return { kLo: Math.floor(Math.min(...vs) / CELL), kHi: Math.ceil(Math.max(...vs) / CELL) };
  }

  /** The lattice of the m-integral (cell ends, ¼ sensory sd apart) with x̂ there: for naive comparisons. */
  lattice(): { m: number[]; xhat: number[] } {
    const m: number[] = [];
    const xhat: number[] = [];
    for (let k = this.kLo; k <= this.kHi; k++) {
      const mk = this.coord.m(k * CELL);
      m.push(mk);
      xhat.push(this.xhat(mk));
    }
    return { m, xhat };
  }

  /** Pointwise x̂(m), cached by the measurement value. */
  xhat(m: number): number {
    const c = this.cache.get(m);
    if (c !== undefined) return c;
    const e = referenceEstimate(this.obs, this.noise, m);
    this.stats.estimates++;
    this.cache.set(m, e);
    return e;
  }

  /**
   * Jumps of x̂, by bisection on the pointwise x̂: a candidate cell (increment
   * above 0.02 σ_m and 1.3× both neighbours') is halved towards its larger part;
   * it is dropped when the increment falls below a quarter of itself after four
   * halvings or below 0.02 σ_m at any point, and is a jump when it survives on
   * an interval 2^-49 of a cell wide (or at the resolution of doubles).
   */
  private findJumps(kLo: number, kHi: number, xs: number[]): void {
    const sm = this.obs.motorSd;
    const minJump = 0.02 * sm;
    const inc = (i: number) => (i >= 0 && i + 1 < xs.length ? Math.abs(xs[i + 1] - xs[i]) : 0);
    for (let k = kLo; k < kHi; k++) {
      const i = k - kLo;
      const d0 = inc(i);
      // Candidates: increments above the motor-noise scale that stand out from both neighbours.
      if (!(d0 > minJump) || !(d0 > 1.3 * Math.max(inc(i - 1), inc(i + 1)))) continue;
      let a = this.coord.m(k * CELL);
      let b = this.coord.m((k + 1) * CELL);
      let xa = xs[i];
      let xb = xs[i + 1];
      let isJump = true;
      for (let it = 0; it < 49; it++) {
        const mid = 0.5 * (a + b);
        if (mid <= a || mid >= b) break;
        const xm = this.xhat(mid);
        if (Math.abs(xm - xa) >= Math.abs(xb - xm)) {
          b = mid;
          xb = xm;
        } else {
          a = mid;
          xa = xm;
        }
        const d = Math.abs(xb - xa);
        if (it === 3 && d < 0.25 * d0) {
          isJump = false;
          break;
        }
        if (d < minJump) {
          isJump = false;
          break;
        }
      }
      if (isJump) this.jumps.push({ m: 0.5 * (a + b), left: xa, right: xb });
    }
  }

  /** ∫ K(r, x̂(m)) N(m; center(x), sdAt(x)²) dm. */
  integrate(x: number, r: number, kernel: Kernel): number {
    const sm = this.obs.motorSd;
    const c = this.noise.center(x);
    const sd = this.noise.sdAt(x);
    const pm = (m: number) => {
      const z = (m - c) / sd;
      return (Math.exp(-0.5 * z * z) * INV_SQRT_2PI) / sd;
    };
    const K = (xh: number) => {
      const z = (r - xh) / sm;
      if (kernel === 0) return (Math.exp(-0.5 * z * z) * INV_SQRT_2PI) / sm;
      return kernel === 1 ? Phi(z) : Phi(-z);
    };
    const F = (m: number) => {
      this.stats.integrandEvaluations++;
      return K(this.xhat(m)) * pm(m);
    };
    // Break points: lattice cells, jumps, roots of x̂ = r.
    const kA = Math.floor(this.coord.v(c - K_M * sd) / CELL);
    const kB = Math.ceil(this.coord.v(c + K_M * sd) / CELL);
    const pts: { m: number; left: number; right: number }[] = [];
    const jumpsIn = (a: number, b: number) => this.jumps.filter((j) => j.m > a && j.m < b);
    for (let k = kA; k < kB; k++) {
      const a = this.coord.m(k * CELL);
      const b = this.coord.m((k + 1) * CELL);
      const xa = this.xhat(a);
      if (k === kA) pts.push({ m: a, left: xa, right: xa });
      // Continuous pieces of the cell.
      const piece: { m: number; left: number; right: number }[] = [{ m: a, left: xa, right: xa }];
      for (const j of jumpsIn(a, b)) piece.push({ m: j.m, left: j.left, right: j.right });
      const xb = this.xhat(b);
      piece.push({ m: b, left: xb, right: xb });
      for (let q = 0; q + 1 < piece.length; q++) {
        const p0 = piece[q];
        const p1 = piece[q + 1];
        const f0 = p0.right - r;
        const f1 = p1.left - r;
        // Split at the kernel peak when it is narrow against the cell: its width
        // in m is σ_m/|dx̂/dm|. Broad peaks are left to the dyadic cells, whose
        // nodes (and x̂ values) are shared between trials.
        const slope = Math.abs(p1.left - p0.right) / (p1.m - p0.m);
        const narrow = sm < 0.5 * slope * (b - a);
        if (f0 * f1 < 0 && narrow) {
          const root = illinois((u) => this.xhat(u) - r, p0.m, p1.m, f0, f1, (1e-6 * sm) / slope);
          if (root > p0.m && root < p1.m) {
            const xr = this.xhat(root);
            pts.push({ m: root, left: xr, right: xr });
          }
        }
        if (q + 1 < piece.length - 1) pts.push(p1);
      }
      pts.push({ m: b, left: xb, right: xb });
    }
    // Initial Simpson segments.
    const heap = new Heap();
    let total = 0;
    let errSum = 0;
    const make = (a: number, b: number, fa: number, fm: number, fb: number): Seg => {
      const h = b - a;
      const mid = 0.5 * (a + b);
      const fl = F(0.5 * (a + mid));
      const fr = F(0.5 * (mid + b));
      const S = (h / 6) * (fa + 4 * fm + fb);
      const S2 = (h / 12) * (fa + 4 * fl + 2 * fm + 4 * fr + fb);
      return { a, b, fa, fm, fb, S, fl, fr, value: S2 + (S2 - S) / 15, err: Math.abs(S2 - S) / 15 };
    };
    for (let q = 0; q + 1 < pts.length; q++) {
      const a = pts[q].m;
      const b = pts[q + 1].m;
      if (!(b > a)) continue;
      const fa = K(pts[q].right) * pm(a);
      const fb = K(pts[q + 1].left) * pm(b);
      const s = make(a, b, fa, F(0.5 * (a + b)), fb);
      total += s.value;
      errSum += s.err;
      heap.push(s);
    }
    let count = heap.items.length;
    while (heap.items.length && errSum > this.relTol * Math.abs(total) && count < 40000) {
      const s = heap.pop();
      total -= s.value;
      errSum -= s.err;
      const mid = 0.5 * (s.a + s.b);
      if (!(mid > s.a && mid < s.b)) continue;
      const L = make(s.a, mid, s.fa, s.fl, s.fm);
      const R = make(mid, s.b, s.fm, s.fr, s.fb);
      for (const t of [L, R]) {
        total += t.value;
        errSum += t.err;
        heap.push(t);
      }
      count++;
    }
    // Re-sum to shed the running-sum rounding.
    let exact = 0;
    for (const s of heap.items) exact += s.value;
    return exact;
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
}

export interface ReferenceResult {
  logLik: number;
  perTrial: Float64Array;
  conditions: ReferenceCondition[];
}

/** Reference log-likelihood (each trial floored at 1e-300, as the project does). */
export function referenceLogLikelihood(obs: Observer, data: Dataset): ReferenceResult {
  const conds: ReferenceCondition[] = obs.noise.map((noise, c) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (let t = 0; t < data.stimulus.length; t++) {
      if (data.condition[t] !== c) continue;
      lo = Math.min(lo, data.stimulus[t]);
      hi = Math.max(hi, data.stimulus[t]);
    }
    return Number.isFinite(lo) ? new ReferenceCondition(obs, noise, lo, hi) : (null as unknown as ReferenceCondition);
  });
  const perTrial = new Float64Array(data.stimulus.length);
  let s = 0;
  for (let t = 0; t < data.stimulus.length; t++) {
    const p = conds[data.condition[t]].likelihood(data.stimulus[t], data.response[t]);
    perTrial[t] = Math.log(p > 1e-300 ? p : 1e-300);
    s += perTrial[t];
  }
  return { logLik: s, perTrial, conditions: conds };
}
