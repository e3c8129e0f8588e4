/**
 * Error function family and the standard normal cdf, accurate into the far tails.
 *
 * Why our own: the likelihood needs differences of normal tail probabilities far
 * from the centre, and jstat's normal cdf underflows to 0 near −10 and loses
 * percent accuracy near −8. We work with the scaled complementary error function
 * erfcx(x) = exp(x²)·erfc(x), which never underflows.
 *
 * Method (standard, see Abramowitz & Stegun 7.1.6 and 7.1.14):
 *  - |x| < 2: the all-positive series erf(x) = 2/√π · e^{−x²} Σ 2ⁿ x^{2n+1} / (1·3·…·(2n+1)),
 *    which has no cancellation, then erfc = 1 − erf (loses < 3 digits at x = 2).
 *  - x ≥ 2: the Laplace continued fraction for erfc, evaluated by the modified
 *    Lentz algorithm, scaled so exp(−x²) is never formed.
 *  - x < 0: erfcx(x) = 2·exp(x²) − erfcx(−x).
 * Tested against @stdlib's independent erfc/erfcx in test/special.test.ts.
 */

const SQRT_PI = Math.sqrt(Math.PI);
const SQRT2 = Math.SQRT2;
const LOG_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

function erfSeries(x: number): number {
  // erf(x) = 2/√π · e^{−x²} · Σ_{n≥0} 2ⁿ x^{2n+1} / (2n+1)!!
  const x2 = x * x;
  let term = x;
  let sum = x;
  for (let n = 1; n < 200; n++) {
    term *= (2 * x2) / (2 * n + 1);
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return (2 / SQRT_PI) * Math.exp(-x2) * sum;
}

/** erfcx(x) for x ≥ 2 via the continued fraction erfc(x) = e^{−x²}/√π · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + …)))). */
function erfcxContinuedFraction(x: number): number {
  const tiny = 1e-300;
  // f = x + a1/(x + a2/(x + ...)), a_k = k/2
  let f = x;
  let c = x;
  let d = 0;
  for (let k = 1; k < 500; k++) {
    const a = k / 2;
    d = x + a * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = x + a / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    // ≤ EPSILON, not < 1e-16: delta can settle at 1 − 2⁻⁵³ (1.1e-16 away), which a
    // 1e-16 test never accepts, and 500 more steps then drift f by ~500 ulps.
    if (Math.abs(delta - 1) <= Number.EPSILON) break;
  }
  return 1 / (SQRT_PI * f);
}

/** Scaled complementary error function exp(x²)·erfc(x). */
export function erfcx(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0) {
    if (x < -26.6) return Infinity;
    return 2 * Math.exp(x * x) - erfcx(-x);
  }
  if (x < 2) return Math.exp(x * x) * (1 - erfSeries(x));
  if (x > 1e8) return 1 / (SQRT_PI * x);
  return erfcxContinuedFraction(x);
}

/** Complementary error function. */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0) return 2 - erfc(-x);
  if (x < 2) return 1 - erfSeries(x);
  if (x > 27.3) return 0;
  return Math.exp(-x * x) * erfcxContinuedFraction(x);
}

/** Error function. */
export function erf(x: number): number {
  if (Math.abs(x) < 2) return x < 0 ? -erfSeries(-x) : erfSeries(x);
  return x < 0 ? erfc(-x) - 1 : 1 - erfc(x);
}

/** Standard normal density. */
export function normPdf(z: number): number {
  return Math.exp(-0.5 * z * z - LOG_SQRT_2PI);
}

/** Log of the standard normal density. */
export function normLogPdf(z: number): number {
  return -0.5 * z * z - LOG_SQRT_2PI;
}

/** Standard normal cdf Φ(z), relative accuracy kept in the lower tail. */
export function normCdf(z: number): number {
  return 0.5 * erfc(-z / SQRT2);
}

/** Upper tail 1 − Φ(z), relative accuracy kept for large z. */
export function normSf(z: number): number {
  return 0.5 * erfc(z / SQRT2);
}

/** log Φ(z), finite for every finite z. */
export function normLogCdf(z: number): number {
  if (z > -1) return Math.log1p(-0.5 * erfc(z / SQRT2));
  const t = -z / SQRT2;
  return Math.log(0.5 * erfcx(t)) - t * t;
}

/** Mills-type ratio Φ(z)/φ(z), stable for every z. */
export function normCdfOverPdf(z: number): number {
  // Φ(z)/φ(z) = √(π/2)·erfcx(−z/√2)
  return Math.sqrt(Math.PI / 2) * erfcx(-z / SQRT2);
}

/** Φ(b) − Φ(a) for a ≤ b, computed on the side of zero that keeps relative accuracy. */
export function normInterval(a: number, b: number): number {
  if (a > 0) return normSf(a) - normSf(b);
  if (b < 0) return normCdf(b) - normCdf(a);
  return 1 - normCdf(a) - normSf(b);
}

/**
 * Quantile of the standard normal: a rational start (Abramowitz & Stegun 26.2.23,
 * |error| < 4.5e−4) polished by Newton steps on log Φ, which converge in the tails too.
 */
export function normQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  if (p > 0.5) return -normQuantile(1 - p);
  // A&S 26.2.23 for the lower tail
  const t = Math.sqrt(-2 * Math.log(p));
  let z = -(t - (2.515517 + 0.802853 * t + 0.010328 * t * t) / (1 + 1.432788 * t + 0.189269 * t * t + 0.001308 * t * t * t));
  const logP = Math.log(p);
  for (let i = 0; i < 50; i++) {
    // d/dz log Φ(z) = φ(z)/Φ(z)
    const step = (normLogCdf(z) - logP) * normCdfOverPdf(z);
    z -= step;
    if (Math.abs(step) < 1e-15 * Math.max(1, Math.abs(z))) break;
  }
  return z;
}

/** Log-sum-exp of an array slice. */
export function logSumExp(values: ArrayLike<number>, start = 0, end = values.length): number {
  let max = -Infinity;
  for (let i = start; i < end; i++) if (values[i] > max) max = values[i];
  if (max === -Infinity) return -Infinity;
  let sum = 0;
  for (let i = start; i < end; i++) sum += Math.exp(values[i] - max);
  return max + Math.log(sum);
}

/** log(exp(a) + exp(b)) without overflow. */
export function logAddExp(a: number, b: number): number {
  if (a === -Infinity) return b;
  if (b === -Infinity) return a;
  return a > b ? a + Math.log1p(Math.exp(b - a)) : b + Math.log1p(Math.exp(a - b));
}
