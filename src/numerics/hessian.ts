/**
 * Numerical Hessian and the small dense symmetric linear algebra needed to turn
 * it into standard errors.
 *
 * - Hessian by central differences: the three-point second difference on the
 *   diagonal and the four-point mixed-partial formula off it, Abramowitz &
 *   Stegun (1964), Handbook of Mathematical Functions, §25.3 (eq. 25.3.26 for
 *   the mixed partial). Both are O(h²).
 * - Symmetric eigendecomposition by cyclic Jacobi rotations (Jacobi 1846), as
 *   in Golub & Van Loan, Matrix Computations (4th ed. 2013), §8.5, with the
 *   stable rotation of their symmetric 2×2 Schur step.
 * - Inversion through the eigendecomposition, so the same pass yields the
 *   condition number and exposes flat (unidentified) parameter directions.
 *
 * Jacobi is chosen over QR because the matrices here are tiny (a handful of
 * model parameters) and Jacobi is simple, robust and accurate for small
 * eigenvalues relative to the matrix norm.
 */

export type Matrix = number[][];

/**
 * Hessian of f at x. Steps default to 1e-4·max(1, |x_i|), near ε^{1/4}, which
 * balances O(h²) truncation against O(ε/h²) roundoff for second differences.
 * Entries whose probes hit a non-finite value come out non-finite; callers
 * should treat such a Hessian as unusable (invertSymmetric returns null).
 */
export function numericalHessian(
  f: (x: readonly number[]) => number,
  x: readonly number[],
  steps?: number | readonly number[],
): Matrix {
  const n = x.length;
  const h = x.map((xi, i) => {
    const raw = steps === undefined ? 1e-4 * Math.max(1, Math.abs(xi)) : typeof steps === 'number' ? steps : steps[i];
    if (!Number.isFinite(raw) || raw === 0) throw new RangeError('Hessian steps must be finite and non-zero');
    // The step actually represented in floating point, so the divisor matches the probe.
    return xi + raw - xi;
  });
  const at = (di: number, si: number, dj: number, sj: number): number => {
    const p = x.slice();
    p[di] += si * h[di];
    p[dj] += sj * h[dj];
    return f(p);
  };
  const f0 = f(x);
  const H: Matrix = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    const p = x.slice();
    p[i] = x[i] + h[i];
    const fp = f(p);
    p[i] = x[i] - h[i];
    const fm = f(p);
    H[i][i] = (fp - 2 * f0 + fm) / (h[i] * h[i]);
    for (let j = 0; j < i; j++) {
      const v = (at(i, 1, j, 1) - at(i, 1, j, -1) - at(i, -1, j, 1) + at(i, -1, j, -1)) / (4 * h[i] * h[j]);
      H[i][j] = v;
      H[j][i] = v;
    }
  }
  return H;
}

export interface SymmetricEigen {
  /** Eigenvalues in ascending order. */
  values: number[];
  /** vectors[k] is the unit eigenvector belonging to values[k]. */
  vectors: number[][];
}

function checkSquareFinite(A: readonly (readonly number[])[]): void {
  const n = A.length;
  for (const row of A) {
    if (row.length !== n) throw new RangeError('matrix must be square');
    for (const v of row) if (!Number.isFinite(v)) throw new RangeError('matrix entries must be finite');
  }
}

/** Eigenvalues (ascending) and eigenvectors of a symmetric matrix by cyclic Jacobi. */
export function symmetricEigen(A: readonly (readonly number[])[]): SymmetricEigen {
  checkSquareFinite(A);
  const n = A.length;
  // Averaging with the transpose absorbs the roundoff asymmetry of numerical Hessians.
  const a: Matrix = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => 0.5 * (A[i][j] + A[j][i])));
  const V: Matrix = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)));

  let total = 0;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) total += a[i][j] * a[i][j];
  // Jacobi converges quadratically; 100 sweeps is far beyond what any input needs.
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += a[i][j] * a[i][j];
    if (off <= 1e-32 * total || off === 0) break;
    for (let p = 0; p < n; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = a[p][q];
        if (apq === 0) continue;
        const tau = (a[q][q] - a[p][p]) / (2 * apq);
        // Smaller root of t² + 2τt − 1 = 0: rotation angle ≤ π/4, which is what makes sweeps converge.
        const t = (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = a[k][p];
          const akq = a[k][q];
          a[k][p] = c * akp - s * akq;
          a[k][q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = a[p][k];
          const aqk = a[q][k];
          a[p][k] = c * apk - s * aqk;
          a[q][k] = s * apk + c * aqk;
        }
        for (let k = 0; k < n; k++) {
          const vkp = V[k][p];
          const vkq = V[k][q];
          V[k][p] = c * vkp - s * vkq;
          V[k][q] = s * vkp + c * vkq;
        }
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => a[i][i] - a[j][j] || i - j);
  return {
    values: order.map((i) => a[i][i]),
    vectors: order.map((i) => V.map((row) => row[i])),
  };
}

export interface SymmetricInverse {
  inverse: Matrix;
  /** λ_max / λ_min of the input; large values mean a nearly flat direction. */
  conditionNumber: number;
  eigen: SymmetricEigen;
}

/**
 * Inverse of a symmetric positive-definite matrix, or null when it is not
 * positive definite to working precision: the smallest eigenvalue must exceed
 * relativeTolerance·λ_max (default n·ε). Non-finite entries also give null,
 * since they come from Hessian probes that hit a non-finite objective.
 * A caller that wants to name the flat direction can call symmetricEigen and
 * read the eigenvector of the smallest eigenvalue.
 */
export function invertSymmetric(
  A: readonly (readonly number[])[],
  relativeTolerance?: number,
): SymmetricInverse | null {
  const n = A.length;
  for (const row of A) {
    if (row.length !== n) throw new RangeError('matrix must be square');
    for (const v of row) if (!Number.isFinite(v)) return null;
  }
  if (n === 0) return { inverse: [], conditionNumber: 1, eigen: { values: [], vectors: [] } };
  const eigen = symmetricEigen(A);
  const lo = eigen.values[0];
  const hi = eigen.values[n - 1];
  const tol = relativeTolerance ?? n * Number.EPSILON;
  if (!(lo > 0) || lo <= tol * hi) return null;
  const inverse: Matrix = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let k = 0; k < n; k++) {
    const v = eigen.vectors[k];
    const w = 1 / eigen.values[k];
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) inverse[i][j] += w * v[i] * v[j];
  }
  return { inverse, conditionNumber: hi / lo, eigen };
}
