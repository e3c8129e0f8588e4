/**
 * Gauss–Legendre and Gauss–Hermite quadrature rules.
 *
 * Nodes are roots of the orthogonal polynomials, found by Newton's method on the
 * three-term recurrence (the classical construction; see Abramowitz & Stegun
 * 25.4.29 and 25.4.46). Checked against Abramowitz & Stegun Table 25.4 / 25.10
 * in test/gaussRules.test.ts. Rules are cached: they are built once per size.
 */

export interface QuadratureRule {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
}

const legendreCache = new Map<number, QuadratureRule>();
const hermiteCache = new Map<number, QuadratureRule>();

/** n-point Gauss–Legendre rule on [−1, 1]. */
export function gaussLegendre(n: number): QuadratureRule {
  const cached = legendreCache.get(n);
  if (cached) return cached;
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`Gauss–Legendre size must be a positive integer, got ${n}`);
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const half = Math.floor((n + 1) / 2);
  for (let i = 0; i < half; i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let iter = 0; iter < 100; iter++) {
      let p0 = 1;
      let p1 = x;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      if (n === 1) { p1 = x; p0 = 1; }
      dp = (n * (x * p1 - p0)) / (x * x - 1);
      const dx = p1 / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    const w = 2 / ((1 - x * x) * dp * dp);
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  if (n === 1) { nodes[0] = 0; weights[0] = 2; }
  const rule = { nodes, weights };
  legendreCache.set(n, rule);
  return rule;
}

/** n-point Gauss–Hermite rule for ∫ e^{−x²} f(x) dx (physicists' weight). */
export function gaussHermite(n: number): QuadratureRule {
  const cached = hermiteCache.get(n);
  if (cached) return cached;
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`Gauss–Hermite size must be a positive integer, got ${n}`);
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const PIM4 = Math.pow(Math.PI, -0.25);
  const half = Math.floor((n + 1) / 2);
  let z = 0;
  for (let i = 0; i < half; i++) {
    // Initial guesses of the classical construction for the largest roots first.
    if (i === 0) z = Math.sqrt(2 * n + 1) - 1.85575 * Math.pow(2 * n + 1, -0.16667);
    else if (i === 1) z -= (1.14 * Math.pow(n, 0.426)) / z;
    else if (i === 2) z = 1.86 * z - 0.86 * nodes[0];
    else if (i === 3) z = 1.91 * z - 0.91 * nodes[1];
    else z = 2 * z - nodes[i - 2];
    let pp = 0;
    for (let iter = 0; iter < 200; iter++) {
      // Orthonormal Hermite recurrence.
      let p1 = PIM4;
      let p2 = 0;
      for (let j = 0; j < n; j++) {
        const p3 = p2;
        p2 = p1;
        p1 = z * Math.sqrt(2 / (j + 1)) * p2 - Math.sqrt(j / (j + 1)) * p3;
      }
      pp = Math.sqrt(2 * n) * p2;
      const z1 = z;
      z = z1 - p1 / pp;
      if (Math.abs(z - z1) < 1e-15) break;
    }
    nodes[i] = z;
    nodes[n - 1 - i] = -z;
    weights[i] = 2 / (pp * pp);
    weights[n - 1 - i] = weights[i];
  }
  // Stored ascending.
  nodes.reverse();
  weights.reverse();
  const rule = { nodes, weights };
  hermiteCache.set(n, rule);
  return rule;
}
