/**
 * Posterior-predictive check of one fitted model against one participant:
 * the observed response errors (response − stimulus) against errors simulated
 * at the fitted parameters on the same trials, compared by the two-sample
 * Kolmogorov–Smirnov distance D = sup |F_obs − F_sim| (Smirnov 1939) and by
 * quantiles. The 5% critical value 1.358·√((n+m)/(nm)) is the large-sample
 * value of the two-sample test (Massey 1951, JASA 46:68, table; from memory).
 * Quantiles use linear interpolation between order statistics (Hyndman & Fan
 * 1996, The American Statistician 50:361, definition 7).
 */

export const CHECK_PROBABILITIES = [0.1, 0.25, 0.5, 0.75, 0.9] as const;

export interface PredictiveCheck {
  model: string;
  /** The condition whose trials are compared; null for all trials together. */
  condition: string | null;
  /** Simulated datasets pooled into the simulated distribution. */
  replicates: number;
  /** Two-sample Kolmogorov–Smirnov distance between observed and simulated errors. */
  ksDistance: number;
  /** Distance above which the two distributions differ at the 5% level (large-sample value). */
  ksCritical5Percent: number;
  /** Response error quantiles at CHECK_PROBABILITIES, observed and simulated. */
  observedErrorQuantiles: number[];
  simulatedErrorQuantiles: number[];
}

export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** sup |F_a − F_b| of two samples (sorted copies are made). */
export function ksDistance(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const x = Float64Array.from(a).sort();
  const y = Float64Array.from(b).sort();
  let i = 0;
  let j = 0;
  let d = 0;
  while (i < x.length && j < y.length) {
    // Step past every copy of the smaller value in both samples, so ties are compared after the jump.
    const v = Math.min(x[i], y[j]);
    while (i < x.length && x[i] === v) i++;
    while (j < y.length && y[j] === v) j++;
    d = Math.max(d, Math.abs(i / x.length - j / y.length));
  }
  return d;
}

export function predictiveCheck(model: string, observedErrors: ArrayLike<number>, simulatedErrors: ArrayLike<number>, replicates: number, condition: string | null = null): PredictiveCheck {
  const n = observedErrors.length;
  const m = simulatedErrors.length;
  const obs = Float64Array.from(observedErrors).sort();
  const sim = Float64Array.from(simulatedErrors).sort();
  return {
    model,
    condition,
    replicates,
    ksDistance: ksDistance(obs, sim),
    ksCritical5Percent: 1.358 * Math.sqrt((n + m) / (n * m)),
    observedErrorQuantiles: CHECK_PROBABILITIES.map((p) => quantileSorted(obs, p)),
    simulatedErrorQuantiles: CHECK_PROBABILITIES.map((p) => quantileSorted(sim, p)),
  };
}
