/**
 * Scalar root finding and minimisation.
 *  - bisectMonotone: plain bisection for a monotone function (robust, used for quantiles).
 *  - brentRoot: Brent's method (Brent 1973, Algorithms for Minimization without Derivatives, ch. 4).
 *  - brentMinimize: Brent's golden-section/parabolic minimiser (same book, ch. 5).
 *  - safeguardedNewton: Newton's method kept inside a bracket, with an early stop
 *    from its quadratic convergence.
 */

export function bisectMonotone(f: (x: number) => number, lo: number, hi: number, relTol = 1e-14, maxIter = 400): number {
  let flo = f(lo);
  for (let i = 0; i < maxIter; i++) {
    const mid = 0.5 * (lo + hi);
    if (mid === lo || mid === hi || hi - lo <= relTol * Math.max(1, Math.abs(mid))) return mid;
    const fm = f(mid);
    if ((fm < 0) === (flo < 0)) {
      lo = mid;
      flo = fm;
    } else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** Brent's root finder on a bracket [a, b] with f(a)·f(b) ≤ 0. */
export function brentRoot(f: (x: number) => number, a: number, b: number, tol = 1e-13, maxIter = 200, known?: { fa: number; fb: number }): number {
  // Callers that bracketed the root already hold f(a) and f(b).
  let fa = known ? known.fa : f(a);
  let fb = known ? known.fb : f(b);
  if (fa === 0) return a;
  if (fb === 0) return b;
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let iter = 0; iter < maxIter; iter++) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b; b = c; c = a;
      fa = fb; fb = fc; fc = fa;
    }
    const tol1 = 2 * Number.EPSILON * Math.abs(b) + 0.5 * tol;
    const xm = 0.5 * (c - b);
    if (Math.abs(xm) <= tol1 || fb === 0) return b;
    if (Math.abs(e) >= tol1 && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * xm * s;
        q = 1 - s;
      } else {
        const qq = fa / fc;
        const r = fb / fc;
        p = s * (2 * xm * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      p = Math.abs(p);
      if (2 * p < Math.min(3 * xm * q - Math.abs(tol1 * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = xm;
        e = d;
      }
    } else {
      d = xm;
      e = d;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol1 ? d : xm > 0 ? tol1 : -tol1;
    fb = f(b);
  }
  return b;
}

/** Brent's minimiser on [a, b]; returns the abscissa of the minimum found. */
export function brentMinimize(f: (x: number) => number, a: number, b: number, tol = 1e-12, maxIter = 200): { x: number; value: number } {
  const golden = 0.3819660112501051;
  let x = a + golden * (b - a);
  let w = x;
  let v = x;
  let fx = f(x);
  let fw = fx;
  let fv = fx;
  let d = 0;
  let e = 0;
  for (let iter = 0; iter < maxIter; iter++) {
    const xm = 0.5 * (a + b);
    const tol1 = tol * Math.abs(x) + 1e-300;
    const tol2 = 2 * tol1;
    if (Math.abs(x - xm) <= tol2 - 0.5 * (b - a)) break;
    let useGolden = true;
    if (Math.abs(e) > tol1) {
      const r = (x - w) * (fx - fv);
      let q = (x - v) * (fx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      q = Math.abs(q);
      const etemp = e;
      e = d;
      if (!(Math.abs(p) >= Math.abs(0.5 * q * etemp) || p <= q * (a - x) || p >= q * (b - x))) {
        d = p / q;
        const u = x + d;
        if (u - a < tol2 || b - u < tol2) d = xm - x >= 0 ? tol1 : -tol1;
        useGolden = false;
      }
    }
    if (useGolden) {
      e = x >= xm ? a - x : b - x;
      d = golden * e;
    }
    const u = Math.abs(d) >= tol1 ? x + d : x + (d >= 0 ? tol1 : -tol1);
    const fu = f(u);
    if (fu <= fx) {
      if (u >= x) a = x;
      else b = x;
      v = w; fv = fw;
      w = x; fw = fx;
      x = u; fx = fu;
    } else {
      if (u < x) a = u;
      else b = u;
      if (fu <= fw || w === x) {
        v = w; fv = fw;
        w = u; fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u; fv = fu;
      }
    }
  }
  return { x, value: fx };
}

/**
 * Root of an increasing function inside [lo, hi] by Newton steps from
 * `start`, bisecting whenever a step leaves the bracket (which shrinks with
 * every evaluation) or the slope is not positive. `f` returns the value and
 * its slope. Newton's error after a step is about |f″/2f′|·step² (quadratic
 * convergence; e.g. Dennis & Schnabel, Numerical Methods for Unconstrained
 * Optimization, Thm 2.4.3); callers pass `scale`, a length over which f′
 * changes by order one (so |f″/f′| ≲ 1/scale), and a step below
 * √(1e-3·tol·scale) then leaves an error far below tol: the iteration stops
 * there without one more evaluation to confirm it. NaN when the start lies
 * outside the bracket, f is not finite, or it does not settle in maxIter.
 */
export function safeguardedNewton(
  f: (x: number) => readonly [number, number],
  start: number,
  lo: number,
  hi: number,
  tol: number,
  scale: number,
  maxIter = 40,
): number {
  if (!(start > lo && start < hi)) return NaN;
  let x = start;
  for (let it = 0; it < maxIter; it++) {
    const [fx, slope] = f(x);
    if (fx === 0) return x;
    if (!Number.isFinite(fx)) return NaN;
    if (fx < 0) lo = x;
    else hi = x;
    let next = slope > 0 ? x - fx / slope : NaN;
    // A Newton step below half an ulp of x leaves x where it is, on the bracket end just set:
    // converged, not a step outside the bracket (which would bisect away from the root).
    if (next === x) return x;
    const newton = next > lo && next < hi;
    if (!newton) next = 0.5 * (lo + hi);
    const step = next - x;
    if (Math.abs(step) <= tol) return next;
    if (newton && step * step <= 1e-3 * tol * scale) return next;
    x = next;
  }
  return NaN;
}
