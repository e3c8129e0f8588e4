/**
 * Unconstrained local minimisers on Rⁿ: Nelder–Mead and BFGS.
 *
 * - Nelder–Mead simplex search (Nelder & Mead 1965), in the formulation of
 *   Lagarias, Reeds, Wright & Wright (1998), with the dimension-adaptive
 *   coefficients of Gao & Han (2012), "Implementing the Nelder–Mead simplex
 *   algorithm with adaptive parameters", Comput. Optim. Appl. 51:259–277.
 * - BFGS quasi-Newton with central-difference gradients and an Armijo
 *   backtracking line search, following Nocedal & Wright, Numerical
 *   Optimization (2nd ed. 2006), Algorithm 6.1, eqs. (6.17) and (6.20).
 *
 * Bounded parameters are the caller's business (log/logit transforms), so both
 * methods work on all of Rⁿ. Objectives from likelihood code do go non-finite
 * (log of a zero probability, overflow at extreme parameters); such values are
 * read as +∞ so the search simply retreats from them instead of failing.
 * The budget is a count of objective calls, never wall time, so results are
 * reproducible across machines.
 */

export type Objective = (x: readonly number[]) => number;

export interface MinimizeOptions {
  /** Hard cap on objective calls (gradient probes included). Default 1000·max(1, n). */
  maxEvaluations?: number;
  /**
   * Nelder–Mead: edge of the initial simplex along each coordinate.
   * BFGS: largest coordinate change allowed on the first (unscaled) step.
   * Number or one value per coordinate; default 0.5.
   */
  initialStep?: number | readonly number[];
  /** Step / simplex-size tolerance, relative to max(1, |x_i|). Default 1e-8. */
  xTolerance?: number;
  /** Function-change tolerance, relative to max(1, |f|). Default 1e-10. */
  fTolerance?: number;
  /** BFGS: gradient max-norm tolerance, relative to max(1, |f|). Default 1e-6. */
  gradientTolerance?: number;
  /** Nelder–Mead: restart once from the best point after an early stop. Default true. */
  restart?: boolean;
  /**
   * BFGS: relative step of the central-difference gradient, default 1e-5.
   * Objectives computed by quadrature carry tiny steps of their own; a larger
   * step keeps those from dominating the gradient.
   */
  gradientStep?: number;
  /**
   * BFGS: while the gradient's max-norm exceeds this many gradient tolerances,
   * use one-sided differences (n probes instead of 2n). Their O(h) bias is
   * nearly the same at neighbouring points and largely cancels in the BFGS
   * update; near the optimum, where the convergence test needs an accurate
   * gradient, central differences take over (one-sided again only if the
   * gradient grows past three times this level). Default 0: always central.
   */
  forwardDifferenceFactor?: number;
  /**
   * BFGS: called after every accepted step with the new point and value; a
   * non-null answer ends the search there as converged, with that reason
   * (a multi-start fit uses it to stop a start that has reached an optimum
   * another start already found).
   */
  stopAt?: (x: readonly number[], f: number) => string | null;
}

export interface MinimizeResult {
  x: number[];
  value: number;
  evaluations: number;
  converged: boolean;
  reason: string;
}

const NON_FINITE_START = 'non-finite objective at start';
/** BFGS: back to one-sided differences once the gradient exceeds this many times the switch level (hysteresis). */
const FORWARD_AGAIN = 3;
/** BFGS: doublings of a step taken after one that learned no curvature (2⁶ = 64 times the step at most). */
const MAX_GROWTH = 6;
const BUDGET = 'evaluation budget exhausted';

/**
 * Wraps the objective so that every algorithm shares the same budget and
 * non-finite conventions, and remembers the best point ever evaluated: when
 * the budget runs out mid-iteration the answer is still the best point seen.
 */
class BudgetedObjective {
  evaluations = 0;
  /** Set once a call was refused; results computed after that are not trustworthy. */
  starved = false;
  bestValue = Infinity;
  bestX: number[];

  constructor(
    private readonly f: Objective,
    readonly maxEvaluations: number,
    x0: readonly number[],
  ) {
    this.bestX = x0.slice();
  }

  get exhausted(): boolean {
    return this.evaluations >= this.maxEvaluations;
  }

  evaluate(x: readonly number[]): number {
    // Refusing (rather than overrunning) keeps evaluations ≤ maxEvaluations exactly.
    if (this.evaluations >= this.maxEvaluations) {
      this.starved = true;
      return Infinity;
    }
    this.evaluations++;
    // An overflowed trial point is charged but not passed on: f might return a
    // finite number for NaN input, and then NaN would leak into the answer.
    for (const xi of x) if (!Number.isFinite(xi)) return Infinity;
    const raw = this.f(x);
    // −∞ counts as +∞ too: it signals a broken evaluation, not a great fit.
    const value = Number.isFinite(raw) ? raw : Infinity;
    if (value < this.bestValue) {
      this.bestValue = value;
      this.bestX = x.slice();
    }
    return value;
  }

  result(converged: boolean, reason: string): MinimizeResult {
    return {
      x: this.bestX.slice(),
      value: this.bestValue,
      evaluations: this.evaluations,
      converged,
      reason,
    };
  }
}

function checkStart(x0: readonly number[]): void {
  for (const xi of x0) {
    if (!Number.isFinite(xi)) throw new RangeError('start point must have finite coordinates');
  }
}

function budgetFor(options: MinimizeOptions, n: number): number {
  const m = options.maxEvaluations ?? 1000 * Math.max(1, n);
  if (!Number.isFinite(m) || m < 1) throw new RangeError('maxEvaluations must be a finite number ≥ 1');
  return Math.floor(m);
}

function stepsFor(options: MinimizeOptions, n: number): number[] {
  const s = options.initialStep ?? 0.5;
  const steps = typeof s === 'number' ? new Array<number>(n).fill(s) : s.slice();
  if (steps.length !== n) throw new RangeError(`initialStep has ${steps.length} entries, expected ${n}`);
  for (const h of steps) {
    // A zero edge would make the simplex degenerate from the start.
    if (!Number.isFinite(h) || h === 0) throw new RangeError('initialStep entries must be finite and non-zero');
  }
  return steps;
}

function positiveOr(value: number | undefined, fallback: number, name: string): number {
  if (value === undefined) return fallback;
  if (!Number.isFinite(value) || value < 0) throw new RangeError(`${name} must be a finite number ≥ 0`);
  return value;
}

// ---------------------------------------------------------------------------
// Nelder–Mead
// ---------------------------------------------------------------------------

/** Nelder–Mead simplex minimisation with Gao–Han adaptive coefficients. */
export function nelderMead(f: Objective, x0: readonly number[], options: MinimizeOptions = {}): MinimizeResult {
  checkStart(x0);
  const n = x0.length;
  const obj = new BudgetedObjective(f, budgetFor(options, n), x0);
  const steps = stepsFor(options, n);
  const xTol = positiveOr(options.xTolerance, 1e-8, 'xTolerance');
  const fTol = positiveOr(options.fTolerance, 1e-10, 'fTolerance');
  const allowRestart = options.restart ?? true;

  const f0 = obj.evaluate(x0);
  if (f0 === Infinity) return obj.result(false, NON_FINITE_START);
  if (n === 0) return obj.result(true, 'zero-dimensional problem');

  // Gao & Han's coefficients shrink expansion and contraction as n grows, which
  // keeps the simplex from degenerating in higher dimensions. At n = 1 their
  // shrink factor is 0 (collapse to a point), so the classic values are used.
  const alpha = 1;
  const beta = n >= 2 ? 1 + 2 / n : 2;
  const gamma = n >= 2 ? 0.75 - 1 / (2 * n) : 0.5;
  const delta = n >= 2 ? 1 - 1 / n : 0.5;

  let verts: number[][] = [];
  let vals: number[] = [];
  const build = (base: readonly number[], baseValue: number): void => {
    verts = [base.slice()];
    vals = [baseValue];
    for (let i = 0; i < n; i++) {
      const v = base.slice();
      v[i] += steps[i];
      verts.push(v);
      vals.push(obj.evaluate(v));
    }
  };
  build(x0, f0);

  let restarted = false;
  const order = Array.from({ length: n + 1 }, (_, i) => i);

  for (;;) {
    // Stable index sort keeps tie handling deterministic.
    order.sort((a, b) => vals[a] - vals[b] || a - b);
    verts = order.map((i) => verts[i]);
    vals = order.map((i) => vals[i]);
    for (let i = 0; i <= n; i++) order[i] = i;

    const best = verts[0];
    let size = 0;
    for (let k = 1; k <= n; k++) {
      for (let i = 0; i < n; i++) {
        size = Math.max(size, Math.abs(verts[k][i] - best[i]) / Math.max(1, Math.abs(best[i])));
      }
    }
    const spread = vals[n] - vals[0]; // NaN or ∞ while any vertex is infinite: never "converged"
    if (size <= xTol && spread <= fTol * Math.max(1, Math.abs(vals[0]))) {
      // A collapsed simplex can stop far from a minimum (McKinnon 1998 gives a
      // smooth convex example); a fresh full-size simplex at the claimed point
      // either confirms it or escapes. Only worth it with budget left.
      if (allowRestart && !restarted && obj.evaluations < 0.5 * obj.maxEvaluations) {
        restarted = true;
        build(obj.bestX, obj.bestValue);
        continue;
      }
      return obj.result(true, restarted ? 'simplex converged (confirmed by restart)' : 'simplex converged');
    }
    if (obj.exhausted) return obj.result(false, BUDGET);

    const worst = verts[n];
    const fWorst = vals[n];
    const centroid = new Array<number>(n).fill(0);
    for (let k = 0; k < n; k++) for (let i = 0; i < n; i++) centroid[i] += verts[k][i] / n;
    const along = (t: number): number[] => centroid.map((c, i) => c + t * (c - worst[i]));

    const xr = along(alpha);
    const fr = obj.evaluate(xr);
    if (fr < vals[0]) {
      const xe = along(alpha * beta);
      const fe = obj.evaluate(xe);
      if (fe < fr) {
        verts[n] = xe;
        vals[n] = fe;
      } else {
        verts[n] = xr;
        vals[n] = fr;
      }
      continue;
    }
    if (fr < vals[n - 1]) {
      verts[n] = xr;
      vals[n] = fr;
      continue;
    }
    // Contraction: outside when the reflection beat the worst vertex, else inside.
    const outside = fr < fWorst;
    const xc = along(outside ? alpha * gamma : -gamma);
    const fc = obj.evaluate(xc);
    if (outside ? fc <= fr : fc < fWorst) {
      verts[n] = xc;
      vals[n] = fc;
      continue;
    }
    for (let k = 1; k <= n; k++) {
      verts[k] = verts[k].map((v, i) => best[i] + delta * (v - best[i]));
      vals[k] = obj.evaluate(verts[k]);
    }
  }
}

// ---------------------------------------------------------------------------
// BFGS
// ---------------------------------------------------------------------------

interface Gradient {
  g: number[];
  /** False when some coordinate had no finite neighbour on either side. */
  reliable: boolean;
}

/**
 * Central differences with h ≈ step·max(1, |x_i|) (default 1e-5): near the cube root of machine
 * epsilon, balancing truncation against roundoff. Next to a non-finite wall the
 * one-sided difference from the finite side is used instead.
 */
function numericalGradient(obj: BudgetedObjective, x: readonly number[], fx: number, step = 1e-5, forward = false): Gradient {
  const n = x.length;
  const g = new Array<number>(n).fill(0);
  let reliable = true;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    if (forward) {
      const xp = x.slice();
      xp[i] = xi + step * Math.max(1, Math.abs(xi));
      const hp = xp[i] - xi;
      const fp = obj.evaluate(xp);
      if (fp < Infinity) {
        g[i] = (fp - fx) / hp;
        continue;
      }
      const xm = x.slice();
      xm[i] = xi - hp;
      const fm = obj.evaluate(xm);
      if (fm < Infinity) g[i] = (fx - fm) / (xi - xm[i]);
      else reliable = false;
      continue;
    }
    const xp = x.slice();
    const xm = x.slice();
    xp[i] = xi + step * Math.max(1, Math.abs(xi));
    // Using the steps actually represented in floating point removes one error source.
    const hp = xp[i] - xi;
    xm[i] = xi - hp;
    const hm = xi - xm[i];
    const fp = obj.evaluate(xp);
    const fm = obj.evaluate(xm);
    if (fp < Infinity && fm < Infinity) g[i] = (fp - fm) / (hp + hm);
    else if (fp < Infinity) g[i] = (fp - fx) / hp;
    else if (fm < Infinity) g[i] = (fx - fm) / hm;
    else reliable = false;
  }
  return { g, reliable };
}

const dot = (a: readonly number[], b: readonly number[]): number => {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
};
const maxAbs = (a: readonly number[]): number => a.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
const identity = (n: number): number[][] =>
  Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)));

/** BFGS quasi-Newton minimisation with numerical gradients and Armijo backtracking. */
export function bfgs(f: Objective, x0: readonly number[], options: MinimizeOptions = {}): MinimizeResult {
  checkStart(x0);
  const n = x0.length;
  const obj = new BudgetedObjective(f, budgetFor(options, n), x0);
  const firstStep = maxAbs(stepsFor(options, n));
  const xTol = positiveOr(options.xTolerance, 1e-8, 'xTolerance');
  const fTol = positiveOr(options.fTolerance, 1e-10, 'fTolerance');
  const gTol = positiveOr(options.gradientTolerance, 1e-6, 'gradientTolerance');
  const gStep = positiveOr(options.gradientStep, 1e-5, 'gradientStep');
  const forwardFactor = positiveOr(options.forwardDifferenceFactor, 0, 'forwardDifferenceFactor');

  let x = x0.slice();
  let fx = obj.evaluate(x);
  if (fx === Infinity) return obj.result(false, NON_FINITE_START);
  if (n === 0) return obj.result(true, 'zero-dimensional problem');

  let forward = forwardFactor > 0;
  let { g, reliable } = numericalGradient(obj, x, fx, gStep, forward);
  // Once the gradient is small, central differences (from now on, and at this
  // point); one-sided again only if it grows well past the switch (a search
  // that nears one basin and then moves on across a long slope, such as an
  // exponent walking out to the optimum at its bound, would otherwise pay 2n
  // probes per step all the way).
  const settle = (at: number[], fAt: number, grad: Gradient): Gradient => {
    if (forwardFactor === 0) return grad;
    const size = maxAbs(grad.g) / (gTol * Math.max(1, Math.abs(fAt)));
    if (!forward) {
      if (size > FORWARD_AGAIN * forwardFactor) forward = true;
      return grad;
    }
    if (size > forwardFactor) return grad;
    forward = false;
    return numericalGradient(obj, at, fAt, gStep);
  };
  ({ g, reliable } = settle(x, fx, { g, reliable }));
  let H = identity(n);
  // While H is the raw identity its step has the gradient's units, not x's, so
  // the first trial step is capped and the first update rescales H (N&W 6.20).
  let rawIdentity = true;
  // Set when the last full step left the slope as steep as before (y·s ≤ 0: no
  // curvature learned, so H cannot lengthen the next step; see below).
  let tooShort = false;
  const c1 = 1e-4;

  for (;;) {
    if (obj.starved) return obj.result(false, BUDGET);
    // Relative to |f| because log-likelihood magnitudes grow with the trial count.
    if (reliable && maxAbs(g) <= gTol * Math.max(1, Math.abs(fx))) {
      return obj.result(true, 'gradient tolerance reached');
    }
    if (obj.exhausted) return obj.result(false, BUDGET);

    let p = H.map((row) => -dot(row, g));
    let slope = dot(g, p);
    if (!(slope < 0)) {
      // Roundoff can make H indefinite in effect; steepest descent is always a descent direction.
      H = identity(n);
      rawIdentity = true;
      tooShort = false;
      p = g.map((v) => -v);
      slope = -dot(g, g);
      if (!(slope < 0)) return obj.result(false, 'gradient unavailable: no finite neighbours');
    }

    const pNorm = maxAbs(p);
    let t = rawIdentity ? Math.min(1, firstStep / pNorm) : 1;
    const xScale = Math.max(1, maxAbs(x));
    let accepted: { x: number[]; f: number } | null = null;
    let backtracked = false;
    while (t * pNorm > 1e-15 * xScale) {
      const xt = x.map((v, i) => v + t * p[i]);
      const ft = obj.evaluate(xt);
      if (obj.starved) return obj.result(false, BUDGET);
      if (ft <= fx + c1 * t * slope) {
        accepted = { x: xt, f: ft };
        break;
      }
      if (ft < Infinity) {
        // Minimiser of the quadratic through f(x), f'(x; p) and f(x + t p),
        // safeguarded so the step neither stalls nor barely shrinks.
        const tq = (-slope * t * t) / (2 * (ft - fx - slope * t));
        t = Math.min(0.5 * t, Math.max(0.1 * t, tq));
      } else {
        t *= 0.1;
      }
      backtracked = true;
    }
    if (accepted !== null && tooShort && !backtracked) {
      // Where the objective curves the wrong way along p (a lapse rate far above
      // its optimum, measured), y·s ≤ 0 at every step, the update is skipped and
      // the search crept along p for 60 iterations at t = 1. Doubling the step
      // while it keeps decreasing f crosses such a stretch in a few evaluations.
      // It runs only after such a step; near a minimum y·s > 0 except where
      // gradient noise says otherwise, and there a refused doubling costs one
      // evaluation. (Never after an identity reset: that step is capped.)
      for (let grow = 0; grow < MAX_GROWTH; grow++) {
        const t2 = 2 * t;
        const xt = x.map((v, i) => v + t2 * p[i]);
        const ft = obj.evaluate(xt);
        if (obj.starved) return obj.result(false, BUDGET);
        if (!(ft <= accepted.f + c1 * (t2 - t) * slope)) break;
        accepted = { x: xt, f: ft };
        t = t2;
      }
    }
    if (accepted === null) {
      if (!rawIdentity) {
        H = identity(n);
        rawIdentity = true;
        tooShort = false;
        continue;
      }
      return obj.result(false, 'line search could not decrease the objective');
    }

    const stop = options.stopAt?.(accepted.x, accepted.f);
    if (stop) return obj.result(true, stop);
    const s = accepted.x.map((v, i) => v - x[i]);
    const next = settle(accepted.x, accepted.f, numericalGradient(obj, accepted.x, accepted.f, gStep, forward));
    if (obj.starved) return obj.result(false, BUDGET);
    const y = next.g.map((v, i) => v - g[i]);
    const ys = dot(y, s);
    const yy = dot(y, y);
    // Curvature condition: only a positive y·s keeps H positive definite.
    const curved = ys > 1e-12 * Math.sqrt(yy * dot(s, s));
    tooShort = !curved && !rawIdentity;
    if (curved) {
      if (rawIdentity) {
        const scale = ys / yy;
        H = H.map((row) => row.map((v) => v * scale));
        rawIdentity = false;
      }
      const rho = 1 / ys;
      const Hy = H.map((row) => dot(row, y));
      const yHy = dot(y, Hy);
      const k = rho * rho * yHy + rho;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) {
          H[i][j] += -rho * (Hy[i] * s[j] + s[i] * Hy[j]) + k * s[i] * s[j];
        }
      }
    }

    const fPrev = fx;
    x = accepted.x;
    fx = accepted.f;
    g = next.g;
    reliable = next.reliable;
    if (maxAbs(s) <= xTol * Math.max(1, maxAbs(x)) && Math.abs(fPrev - fx) <= fTol * Math.max(1, Math.abs(fx))) {
      // A tiny step is only evidence of a minimum if the line search did not have
      // to cut it down; otherwise the direction is poor (stale H, or a non-finite
      // region in the way), so first retry with steepest descent.
      if (!backtracked) return obj.result(true, 'step tolerance reached');
      if (!rawIdentity) {
        H = identity(n);
        rawIdentity = true;
        tooShort = false;
        continue;
      }
      return obj.result(false, 'stalled: line search kept cutting steps (non-finite region in the way?)');
    }
  }
}
