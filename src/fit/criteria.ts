/**
 * Information criteria: AIC = −2 log L + 2k (Akaike 1974); AICc adds
 * 2k(k+1)/(n−k−1) (Hurvich & Tsai 1989); BIC = −2 log L + k ln n (Schwarz 1978).
 */
export function aic(logLik: number, k: number): number {
  return -2 * logLik + 2 * k;
}
export function aicc(logLik: number, k: number, n: number): number {
  return n - k - 1 > 0 ? aic(logLik, k) + (2 * k * (k + 1)) / (n - k - 1) : Infinity;
}
export function bic(logLik: number, k: number, n: number): number {
  return -2 * logLik + k * Math.log(n);
}
