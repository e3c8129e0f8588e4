/**
 * Gauss–Hermite and Gauss–Legendre rules (src/numerics/gaussRules.ts) and the
 * Legendre series helpers (src/numerics/legendre.ts).
 *
 * References: Abramowitz & Stegun, Handbook of Mathematical Functions, 25.4.29
 * and Table 25.4 (Gauss–Legendre), 25.4.46 and Table 25.10 (Gauss–Hermite);
 * ∫ x^{2k} e^{−x²} dx = Γ(k + ½) (A&S 6.1.1 with the substitution t = x²);
 * ∫_{−1}^{1} x^d dx = 2/(d+1) for even d, 0 for odd d; the n-point Gauss rule is
 * exact exactly up to degree 2n − 1 (A&S 25.4.29/25.4.46).
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { gaussHermite, gaussLegendre } from '../src/numerics/gaussRules.js';
import { legendreIntegral, legendreTransform, legendreValue } from '../src/numerics/legendre.js';

const SQRT_PI = Math.sqrt(Math.PI);

/** Γ(k + ½) = √π·(2k−1)!!/2^k (A&S 6.1.12). */
function gammaHalf(k: number): number {
  let g = SQRT_PI;
  for (let i = 0; i < k; i++) g *= i + 0.5;
  return g;
}

function moment(rule: { nodes: Float64Array; weights: Float64Array }, d: number): number {
  let s = 0;
  for (let i = 0; i < rule.nodes.length; i++) s += rule.weights[i] * rule.nodes[i] ** d;
  return s;
}

describe('Gauss–Hermite (weight e^{−x²})', () => {
  it('n = 2: nodes ±1/√2, weights √π/2 (A&S 25.4.46, Table 25.10)', () => {
    const r = gaussHermite(2);
    expect(Math.abs(r.nodes[0] + Math.SQRT1_2)).toBeLessThanOrEqual(2e-16);
    expect(Math.abs(r.nodes[1] - Math.SQRT1_2)).toBeLessThanOrEqual(2e-16);
    for (const w of r.weights) expect(Math.abs(w - SQRT_PI / 2)).toBeLessThanOrEqual(4e-16);
  });

  it('n = 3: nodes 0, ±√(3/2); weights 2√π/3, √π/6 (A&S 25.4.46, Table 25.10)', () => {
    const r = gaussHermite(3);
    expect(Math.abs(r.nodes[0] + Math.sqrt(1.5))).toBeLessThanOrEqual(4e-16);
    expect(Math.abs(r.nodes[1])).toBeLessThanOrEqual(1e-16);
    expect(Math.abs(r.nodes[2] - Math.sqrt(1.5))).toBeLessThanOrEqual(4e-16);
    expect(Math.abs(r.weights[0] - SQRT_PI / 6)).toBeLessThanOrEqual(2e-16);
    expect(Math.abs(r.weights[1] - (2 * SQRT_PI) / 3)).toBeLessThanOrEqual(4e-16);
    expect(Math.abs(r.weights[2] - SQRT_PI / 6)).toBeLessThanOrEqual(2e-16);
  });

  it('n = 4: nodes ±√((3 ∓ √6)/2), weights √π/(4(3 ∓ √6)) (roots of H₄ = 16x⁴ − 48x² + 12, A&S 22.3.10)', () => {
    // Table 25.10 (from memory): 0.524647623275290 (w 0.804914090005513), 1.650680123885785 (w 0.0813128354472452)
    const r = gaussHermite(4);
    const inner = Math.sqrt((3 - Math.sqrt(6)) / 2);
    const outer = Math.sqrt((3 + Math.sqrt(6)) / 2);
    const expected = [-outer, -inner, inner, outer];
    // weights w_i = 2^{n−1} n! √π / (n² H_{n−1}(x_i)²) (A&S 25.4.46), which simplifies to the form above
    const wInner = SQRT_PI / (4 * (3 - Math.sqrt(6)));
    const wOuter = SQRT_PI / (4 * (3 + Math.sqrt(6)));
    const expectedW = [wOuter, wInner, wInner, wOuter];
    for (let i = 0; i < 4; i++) {
      expect(Math.abs(r.nodes[i] - expected[i])).toBeLessThanOrEqual(1e-15);
      expect(Math.abs(r.weights[i] - expectedW[i]) / expectedW[i]).toBeLessThanOrEqual(1e-14);
    }
    expect(Math.abs(r.nodes[2] - 0.52464762327529)).toBeLessThanOrEqual(1e-14); // A&S Table 25.10 (from memory)
    expect(Math.abs(r.weights[2] - 0.804914090005513)).toBeLessThanOrEqual(1e-14); // A&S Table 25.10 (from memory)
  });

  it.each([1, 2, 5, 8, 10, 16, 20, 24, 30, 40, 64])('n = %i integrates x^{2k} e^{−x²} to Γ(k+½) for 2k ≤ 2n − 2, odd moments to 0', (n) => {
    const r = gaussHermite(n);
    for (let i = 1; i < n; i++) expect(r.nodes[i]).toBeGreaterThan(r.nodes[i - 1]); // stored ascending
    for (let k = 0; 2 * k <= 2 * n - 2; k++) {
      // measured worst 7.1e-15 relative (n = 30, k = 17)
      expect(Math.abs(moment(r, 2 * k) / gammaHalf(k) - 1), `k = ${k}`).toBeLessThanOrEqual(2e-14);
    }
    for (let k = 0; 2 * k + 1 <= 2 * n - 1; k++) {
      // symmetric nodes: odd moments vanish; measured ≤ 9e-17 relative to Γ(k+1)
      expect(Math.abs(moment(r, 2 * k + 1)) / gammaHalf(k + 1)).toBeLessThanOrEqual(1e-15);
    }
  });

  it('is not exact at degree 2n (the rule is not a trivially exact sum)', () => {
    // For n = 3 the error of x⁶ is n!√π/(2ⁿ·(2n)!)·f^{(2n)} = 3!√π/(8·720)·720 = 3√π/4 (A&S 25.4.46 remainder)
    const r = gaussHermite(3);
    expect(Math.abs(gammaHalf(3) - moment(r, 6) - (3 * SQRT_PI) / 4)).toBeLessThanOrEqual(1e-14);
  });

  it('rejects sizes that are not positive integers', () => {
    expect(() => gaussHermite(0)).toThrow(RangeError);
    expect(() => gaussHermite(2.5)).toThrow(RangeError);
  });
});

describe('Gauss–Legendre on [−1, 1]', () => {
  it('n = 2, 3, 5 against the closed forms behind A&S Table 25.4', () => {
    const r2 = gaussLegendre(2);
    expect(Math.abs(r2.nodes[1] - 1 / Math.sqrt(3))).toBeLessThanOrEqual(2e-16);
    expect(Math.abs(r2.weights[0] - 1)).toBeLessThanOrEqual(4e-16);
    const r3 = gaussLegendre(3);
    expect(Math.abs(r3.nodes[2] - Math.sqrt(0.6))).toBeLessThanOrEqual(2e-16);
    expect(Math.abs(r3.nodes[1])).toBeLessThanOrEqual(1e-16);
    expect(Math.abs(r3.weights[0] - 5 / 9)).toBeLessThanOrEqual(1e-15); // measured 4 ulps
    expect(Math.abs(r3.weights[1] - 8 / 9)).toBeLessThanOrEqual(1e-15);
    // n = 5: nodes 0, ±(1/3)√(5 ∓ 2√(10/7)); weights 128/225, (322 ± 13√70)/900
    const r5 = gaussLegendre(5);
    const a = Math.sqrt(5 - 2 * Math.sqrt(10 / 7)) / 3;
    const b = Math.sqrt(5 + 2 * Math.sqrt(10 / 7)) / 3;
    const nodes = [-b, -a, 0, a, b];
    const weights = [(322 - 13 * Math.sqrt(70)) / 900, (322 + 13 * Math.sqrt(70)) / 900, 128 / 225, (322 + 13 * Math.sqrt(70)) / 900, (322 - 13 * Math.sqrt(70)) / 900];
    for (let i = 0; i < 5; i++) {
      expect(Math.abs(r5.nodes[i] - nodes[i])).toBeLessThanOrEqual(4e-16);
      expect(Math.abs(r5.weights[i] - weights[i])).toBeLessThanOrEqual(2e-15);
    }
    expect(Math.abs(r5.nodes[4] - 0.906179845938664)).toBeLessThanOrEqual(1e-15); // A&S Table 25.4 (from memory)
  });

  it.each([1, 2, 3, 4, 5, 8, 10, 16, 20, 32, 50])('n = %i is exact for x^d, d ≤ 2n − 1', (n) => {
    const r = gaussLegendre(n);
    for (let i = 1; i < n; i++) expect(r.nodes[i]).toBeGreaterThan(r.nodes[i - 1]);
    for (let d = 0; d <= 2 * n - 1; d++) {
      const exact = d % 2 ? 0 : 2 / (d + 1);
      expect(Math.abs(moment(r, d) - exact), `d = ${d}`).toBeLessThanOrEqual(2e-15); // measured ≤ 1.3e-15
    }
  });

  it('is not exact at degree 2n for small n', () => {
    // Error of x^{2n}: 2^{2n+1}(n!)⁴/((2n+1)((2n)!)³)·(2n)! (A&S 25.4.30 remainder), e.g. n = 2: 8/45
    const remainder = (n: number) => {
      let fact = 1;
      for (let i = 2; i <= n; i++) fact *= i;
      let fact2 = 1;
      for (let i = 2; i <= 2 * n; i++) fact2 *= i;
      return (2 ** (2 * n + 1) * fact ** 4) / ((2 * n + 1) * fact2 ** 2);
    };
    for (const n of [1, 2, 3, 5, 8]) {
      const err = 2 / (2 * n + 1) - moment(gaussLegendre(n), 2 * n);
      expect(Math.abs(err / remainder(n) - 1), `n = ${n}`).toBeLessThanOrEqual(1e-10);
    }
    expect(Math.abs(remainder(2) - 8 / 45)).toBeLessThanOrEqual(1e-16);
  });
});

describe('Legendre series (legendreTransform, legendreValue, legendreIntegral)', () => {
  /** Horner evaluation of Σ c_i t^i and of its antiderivative from −1. */
  const poly = (c: number[], t: number) => c.reduceRight((acc, ci) => acc * t + ci, 0);
  const antider = (c: number[], t: number) => {
    const F = (s: number) => c.reduceRight((acc, ci, i) => acc * s + ci / (i + 1), 0) * s;
    return F(t) - F(-1);
  };

  function coefficients(n: number, c: number[]): Float64Array {
    const T = legendreTransform(n);
    const { nodes } = gaussLegendre(n);
    const a = new Float64Array(n);
    for (let k = 0; k < n; k++) for (let i = 0; i < n; i++) a[k] += T[k * n + i] * poly(c, nodes[i]);
    return a;
  }

  it('the transform of P_k at the nodes is the unit vector e_k (orthogonality, A&S 22.2.10)', () => {
    // P_3(t) = (5t³ − 3t)/2 (A&S 22.3.8)
    const n = 10;
    const a = coefficients(n, [0, -1.5, 0, 2.5]);
    // measured 2.7e-15
    for (let k = 0; k < n; k++) expect(Math.abs(a[k] - (k === 3 ? 1 : 0)), `k = ${k}`).toBeLessThanOrEqual(1e-14);
  });

  it('reproduces a polynomial of degree < n and its antiderivative (property)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 12 }),
        fc.array(fc.double({ min: -3, max: 3, noNaN: true }), { minLength: 1, maxLength: 12 }),
        fc.double({ min: -1, max: 1, noNaN: true }),
        (n, cRaw, t) => {
          const c = cRaw.slice(0, n); // degree ≤ n − 1
          const a = coefficients(n, c);
          const scale = c.reduce((s, ci) => s + Math.abs(ci), 0) + 1e-300;
          // measured over 20 000 random cases: value 8.8e-15·Σ|c_i|, integral 7.7e-16·Σ|c_i|
          expect(Math.abs(legendreValue(a, 0, n, t) - poly(c, t))).toBeLessThanOrEqual(2e-14 * scale);
          expect(Math.abs(legendreIntegral(a, 0, n, t) - antider(c, t))).toBeLessThanOrEqual(2e-14 * scale);
        },
      ),
      { seed: 20261202, numRuns: 200 },
    );
  });

  it('works at an offset inside a longer coefficient array, as the posterior panels use it', () => {
    const n = 10;
    const c = [0.3, -1, 2, 0.5, -0.25, 0.1, 0, 0.05, -0.02, 0.01];
    const a = coefficients(n, c);
    const packed = new Float64Array(3 * n).fill(99);
    packed.set(a, n);
    const scale = c.reduce((s, ci) => s + Math.abs(ci), 0);
    for (const t of [-1, -0.3, 0, 0.77, 1]) {
      // same bounds as the property above (measured 3.2e-14 = 7.5e-15·Σ|c_i| at t = 1)
      expect(Math.abs(legendreValue(packed, n, n, t) - poly(c, t))).toBeLessThanOrEqual(2e-14 * scale);
      expect(Math.abs(legendreIntegral(packed, n, n, t) - antider(c, t))).toBeLessThanOrEqual(2e-14 * scale);
    }
    expect(legendreIntegral(packed, n, n, -1)).toBe(0);
  });

  it('the full integral is 2·a₀ (∫_{−1}^{1} P_k = 0 for k ≥ 1)', () => {
    const n = 10;
    const c = [1, 2, -3, 0.5, 1, -0.7, 0.2, 0.1, -0.3, 0.05];
    const a = coefficients(n, c);
    expect(Math.abs(legendreIntegral(a, 0, n, 1) - 2 * a[0])).toBeLessThanOrEqual(1e-14);
    expect(Math.abs(legendreIntegral(a, 0, n, 1) - antider(c, 1))).toBeLessThanOrEqual(1e-14);
  });
});
