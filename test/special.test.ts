/**
 * erfc, erfcx, Φ, log Φ and Φ⁻¹ from src/numerics/special.ts against an
 * independent implementation (@stdlib, a dev dependency never used at run time).
 *
 * Context (not tested here): the runtime statistics library, jstat, is why these
 * functions exist at all. Its normal cdf underflows to 0 near z = −10 and is off
 * by percents near z = −8 (see the header of src/numerics/special.ts), so it
 * cannot serve as a reference either.
 *
 * Tolerances are the measured worst case rounded up (values measured on this
 * machine are quoted beside each). Where a band is looser than the rest, the
 * comment says why: the series branch computes erfc = 1 − erf for x < 2, which
 * costs ~2.3 digits at x → 2 (about 1.8e−13 relative), as the source documents.
 *
 * Results below the smallest normal double (2.2e−308) are subnormal and carry
 * fewer significant bits; there the check is absolute, a few subnormal ulps.
 */
import { describe, it, expect } from 'vitest';
import stdErfc from '@stdlib/math-base-special-erfc';
import stdErfcx from '@stdlib/math-base-special-erfcx';
// erfcinv is installed with @stdlib/stats-base-dists-gamma (it needs it for gammaincinv).
import stdErfcinv from '@stdlib/math-base-special-erfcinv';
import normal from '@stdlib/stats-base-dists-normal';
import { erf, erfc, erfcx, normCdf, normLogCdf, normQuantile, normSf } from '../src/numerics/special.js';

const SMALLEST_NORMAL = 2.2250738585072014e-308;

/** Relative error |a − b|/|b|; absolute in subnormal range (scaled to the smallest normal). */
function relErr(a: number, b: number): number {
  if (a === b) return 0;
  return Math.abs(a - b) / Math.max(Math.abs(b), SMALLEST_NORMAL);
}

function linspace(lo: number, hi: number, n: number): number[] {
  return Array.from({ length: n }, (_, i) => lo + ((hi - lo) * i) / (n - 1));
}

/** Worst relative error of f against g over xs; returns [error, where]. */
function worst(f: (x: number) => number, g: (x: number) => number, xs: number[]): [number, number] {
  let w = 0;
  let at = NaN;
  for (const x of xs) {
    const e = relErr(f(x), g(x));
    if (!(e <= w)) {
      w = e;
      at = x;
    }
  }
  return [w, at];
}

const stdCdf = (z: number) => normal.cdf(z, 0, 1);
const stdLogCdf = (z: number) => normal.logcdf(z, 0, 1);

describe('erfc against @stdlib/math-base-special-erfc', () => {
  // [lo, hi, tolerance]: measured worst case in the comment.
  const bands: [number, number, number][] = [
    [-6, 0, 2e-15], // measured 5.6e-16
    [0, 1, 1e-14], // measured 3.2e-15
    [1, 2, 2.5e-13], // measured 1.8e-13: 1 − erf cancellation just below x = 2 (documented in the source)
    [2, 5, 1e-14], // measured 3.1e-15 (continued fraction)
    [5, 26.5, 1e-13], // measured 5.7e-14: exp(−x·x) with x·x rounded (relative error ≈ x²·2⁻⁵³)
  ];
  it.each(bands)('on [%d, %d] to %s relative', (lo, hi, tol) => {
    const [err, at] = worst(erfc, stdErfc, linspace(lo, hi, 4001)); // independent implementation: @stdlib
    expect(err, `worst at x = ${at}`).toBeLessThanOrEqual(tol);
  });

  it('agrees into the subnormal range and underflows to 0 where the reference does', () => {
    for (const x of linspace(26.5, 27.3, 200)) {
      // independent implementation: @stdlib; absolute in ulps of the subnormal range
      expect(Math.abs(erfc(x) - stdErfc(x))).toBeLessThanOrEqual(4 * Number.MIN_VALUE + 1e-13 * stdErfc(x));
    }
    expect(erfc(28)).toBe(0);
    expect(stdErfc(28)).toBe(0); // independent implementation: @stdlib (erfc(28) ≈ 6e−343 is below the doubles)
  });

  it('erf is 1 − erfc and odd', () => {
    for (const x of linspace(-5, 5, 4001)) {
      // independent implementation: @stdlib; absolute, measured 1.0e-15 at x = −1.99 (the same
      // series error that costs erfc its digits near 2, seen on the scale of erf ≈ 1)
      expect(Math.abs(erf(x) - (1 - stdErfc(x)))).toBeLessThanOrEqual(1.5e-15);
      expect(erf(-x)).toBe(-erf(x));
    }
  });
});

describe('erfcx against @stdlib/math-base-special-erfcx', () => {
  const bands: [number, number, number][] = [
    [-26.6, 0, 2e-15], // measured 8.9e-16 (reflection 2e^{x²} − erfcx(−x))
    [0, 1, 1e-14], // measured 3.0e-15
    [1, 2, 2.5e-13], // measured 1.8e-13: exp(x²)·(1 − erf) cancellation, as for erfc
    [2, 100, 1e-14], // measured 2.3e-15
  ];
  it.each(bands)('on [%d, %d] to %s relative', (lo, hi, tol) => {
    const [err, at] = worst(erfcx, stdErfcx, linspace(lo, hi, 6001)); // independent implementation: @stdlib
    expect(err, `worst at x = ${at}`).toBeLessThanOrEqual(tol);
  });

  it('on [100, 1e9] (log-spaced) to 2e-15 relative', () => {
    const xs = linspace(2, 9, 4001).map((e) => Math.pow(10, e));
    const [err, at] = worst(erfcx, stdErfcx, xs); // independent implementation: @stdlib; measured 7.3e-16
    expect(err, `worst at x = ${at}`).toBeLessThanOrEqual(2e-15);
  });

  it('regression: the continued fraction accepts convergence at 1 − 2⁻⁵³', () => {
    // Before the fix the Lentz loop needed |δ − 1| < 1e−16, which δ = 1 − 1.1e−16
    // never meets; it then ran 500 steps and drifted 7.8e−14 here.
    const x = 94902808.55529459;
    expect(relErr(erfcx(x), stdErfcx(x))).toBeLessThanOrEqual(1e-15); // independent implementation: @stdlib
    // erfcx(x) = 1/(x√π)·(1 − 1/(2x²) + …), Abramowitz & Stegun 7.1.23; the correction is 6e−17 here
    expect(relErr(erfcx(x), 1 / (x * Math.sqrt(Math.PI)))).toBeLessThanOrEqual(4.5e-16);
  });

  it('overflows to +∞ only where e^{x²} does', () => {
    expect(relErr(erfcx(-26.5), stdErfcx(-26.5))).toBeLessThanOrEqual(1e-15); // independent implementation: @stdlib
    expect(erfcx(-26.7)).toBe(Infinity);
    expect(stdErfcx(-26.7)).toBe(Infinity); // independent implementation: @stdlib
  });
});

describe('normCdf, normSf and normLogCdf on z ∈ [−38, 8] against @stdlib/stats-base-dists-normal', () => {
  it('normCdf keeps relative accuracy in the lower tail', () => {
    // independent implementation: @stdlib normal.cdf
    const bands: [number, number, number][] = [
      [-38, -3, 1e-13], // measured 5.7e-14 (normal range); subnormal results checked absolutely by relErr
      [-3, -1.4, 2.5e-13], // measured 1.65e-13: erfc argument in [1, 2), the 1 − erf band
      [-1.4, 0, 1e-14], // measured < 3e-15
      [0, 8, 1e-15], // measured 5.6e-16
    ];
    for (const [lo, hi, tol] of bands) {
      const [err, at] = worst(normCdf, stdCdf, linspace(lo, hi, 4001));
      expect(err, `[${lo}, ${hi}] worst at z = ${at}`).toBeLessThanOrEqual(tol);
    }
  });

  it('normCdf(−30) to 1e-13 relative; subnormal Φ(−38) to a few ulps', () => {
    // Φ(−30) = 4.906713927148764e−198 (independent implementation: @stdlib)
    expect(relErr(normCdf(-30), stdCdf(-30))).toBeLessThanOrEqual(1e-13);
    // Asymptotic series, Abramowitz & Stegun 26.2.12 (equation number from memory):
    // Φ(−z) = φ(z)/z·(1 − 1/z² + 3/z⁴ − 15/z⁶ + 105/z⁸ − 945/z¹⁰ + …); alternating, so the
    // error is below the first omitted term 10395/z¹² ≈ 2e−14 at z = 30.
    const z = 30;
    const series = 1 - 1 / z ** 2 + 3 / z ** 4 - 15 / z ** 6 + 105 / z ** 8 - 945 / z ** 10;
    const mills = (Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI) / z) * series;
    expect(relErr(normCdf(-30), mills)).toBeLessThanOrEqual(2e-13); // + exp(−450) rounding (≈ 450·2⁻⁵³ = 5e−14)
    // Φ(−38) ≈ 2.9e−316 is subnormal (ulp 4.9e−324)
    expect(Math.abs(normCdf(-38) - stdCdf(-38))).toBeLessThanOrEqual(4 * Number.MIN_VALUE);
    expect(normCdf(-38)).toBeGreaterThan(0);
  });

  it('normSf is the mirror of normCdf', () => {
    for (const z of linspace(-8, 38, 2001)) {
      expect(normSf(z)).toBe(normCdf(-z));
      expect(relErr(normSf(z), stdCdf(-z))).toBeLessThanOrEqual(2.5e-13); // independent implementation: @stdlib
    }
  });

  it('normLogCdf is finite on [−38, 8] and matches log Φ', () => {
    // independent implementation: @stdlib normal.logcdf; relative to |log Φ|
    const bands: [number, number, number][] = [
      [-38, -3, 2e-15], // measured 6.2e-16
      [-3, -1, 1e-13], // measured 3.4e-14 (log of 0.5·erfcx(t) − t², t ∈ [0.7, 2.1])
      [-1, 0, 5e-15], // measured 8.6e-16
      [0, 3, 2.5e-13], // measured 1.65e-13: log1p(−Φ(−z)) inherits the erfc band [1, 2)
      [3, 8, 5e-14], // measured 1.2e-14
    ];
    for (const [lo, hi, tol] of bands) {
      const zs = linspace(lo, hi, 4001);
      for (const z of zs) expect(Number.isFinite(normLogCdf(z))).toBe(true);
      const [err, at] = worst(normLogCdf, stdLogCdf, zs);
      expect(err, `[${lo}, ${hi}] worst at z = ${at}`).toBeLessThanOrEqual(tol);
    }
    // log Φ(−38) = −726.5572160188199 (independent implementation: @stdlib), where Φ itself is subnormal
    expect(relErr(normLogCdf(-38), stdLogCdf(-38))).toBeLessThanOrEqual(1e-15);
  });
});

describe('normQuantile on p ∈ [1e−300, 1 − 1e−16]', () => {
  // Reference: Φ⁻¹(p) = −√2·erfcinv(2p) (Abramowitz & Stegun 26.2.2 with 7.1.2),
  // computed by @stdlib's erfcinv. @stdlib's own normal.quantile is NOT used as the
  // reference: it evaluates erfinv(2p − 1), which has lost all digits once p < 1e−16
  // (it returns −∞ at p = 1e−17).
  const reference = (p: number) => (p <= 0.5 ? -Math.SQRT2 * stdErfcinv(2 * p) : Math.SQRT2 * stdErfcinv(2 * (1 - p)));
  const lowerPs = linspace(-300, Math.log10(0.5), 3001).map((e) => Math.pow(10, e));
  const upperPs = linspace(-16, Math.log10(0.5), 1601).map((e) => 1 - Math.pow(10, e));

  it('matches −√2·erfcinv(2p) to 1.5e-13 relative (1e-13 absolute near the median)', () => {
    // independent implementation: @stdlib erfcinv; measured 7.0e-14 relative (at p = 1e−300),
    // 3.3e-14 absolute for |z| < 1
    for (const p of [...lowerPs, ...upperPs]) {
      const q = normQuantile(p);
      const g = reference(p);
      const err = Math.abs(q - g) / Math.max(1, Math.abs(g));
      expect(err, `p = ${p}`).toBeLessThanOrEqual(1.5e-13);
    }
  });

  it('inverts @stdlib log Φ in the lower tail and Φ(−z) in the upper tail', () => {
    for (const p of lowerPs) {
      // independent implementation: @stdlib normal.logcdf; measured 6.5e-15 relative to |log p|
      const q = normQuantile(p);
      expect(Math.abs(stdLogCdf(q) - Math.log(p)) / Math.abs(Math.log(p)), `p = ${p}`).toBeLessThanOrEqual(2e-14);
    }
    for (const p of upperPs) {
      // 1 − p is exact for these p (Sterbenz); independent implementation: @stdlib normal.cdf
      // measured 1.7e-13 relative (the condition number z·φ/Φ amplifies the z error)
      const q = normQuantile(p);
      expect(relErr(stdCdf(-q), 1 - p), `p = ${p}`).toBeLessThanOrEqual(3e-13);
    }
  });

  it('reproduces tabulated quantiles', () => {
    // Φ⁻¹(0.975) = 1.959963984540054, Φ⁻¹(0.995) = 2.5758293035489 (from memory; standard tables)
    expect(Math.abs(normQuantile(0.975) - 1.959963984540054)).toBeLessThanOrEqual(1e-14);
    expect(Math.abs(normQuantile(0.995) - 2.5758293035489)).toBeLessThanOrEqual(1e-12);
    // Φ⁻¹(1e−10) = −6.361340902404056 (from memory)
    expect(Math.abs(normQuantile(1e-10) + 6.361340902404056)).toBeLessThanOrEqual(1e-13);
    expect(Math.abs(normQuantile(0.5))).toBeLessThanOrEqual(1e-16);
  });

  it('endpoints and invalid input', () => {
    expect(normQuantile(0)).toBe(-Infinity);
    expect(normQuantile(1)).toBe(Infinity);
    expect(normQuantile(-0.1)).toBeNaN();
    expect(normQuantile(1.1)).toBeNaN();
    expect(normQuantile(NaN)).toBeNaN();
    expect(Number.isFinite(normQuantile(Number.MIN_VALUE))).toBe(true);
    // Φ⁻¹ of the smallest subnormal: log p = −744.44, z ≈ −38.47 (independent implementation: @stdlib logcdf)
    expect(Math.abs(stdLogCdf(normQuantile(Number.MIN_VALUE)) - Math.log(Number.MIN_VALUE))).toBeLessThanOrEqual(1e-11);
  });
});
