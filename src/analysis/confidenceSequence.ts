/**
 * Anytime-valid confidence sequence for a success probability, so the
 * interval stays valid however often it is looked at and whenever sampling
 * stops (the adaptive sweep looks after every round).
 *
 * Method: Robbins' normal mixture (Robbins 1970, Ann. Math. Stat. 41,
 * "Statistical methods related to the law of the iterated logarithm"), in the
 * form of Howard, Ramdas, McAuliffe & Sekhon (2021), Annals of Statistics 49,
 * "Time-uniform, nonparametric, nonasymptotic confidence sequences", §3 and
 * eq. (3.7) there (from memory). Bernoulli outcomes are sub-Gaussian with
 * variance proxy ¼, so with S_n successes in n trials and V_n = n/4,
 *   M_n = √(ρ/(V_n+ρ)) · exp((S_n − np)² / (2(V_n+ρ)))
 * is a nonnegative supermartingale under p (the mixture over λ ~ N(0, 1/ρ) of
 * exp(λ(S_n − np) − λ²V_n/2)), and by Ville's inequality P(∃n: M_n ≥ 1/α) ≤ α.
 * Hence, simultaneously for all n with probability ≥ 1 − α,
 *   |S_n − np| < √((V_n+ρ) · ln((V_n+ρ)/(ρα²))).
 * ρ tunes where the boundary is tightest; we choose it to minimise the
 * boundary at the largest number of observers the sweep may use.
 */
import { brentMinimize } from '../numerics/roots.js';

export function mixtureBoundary(n: number, rho: number, alpha: number): number {
  const v = n / 4 + rho;
  return Math.sqrt(v * Math.log(v / (rho * alpha * alpha)));
}

/** ρ minimising the boundary at n observers. */
export function tunedRho(n: number, alpha: number): number {
  const r = brentMinimize((logRho) => mixtureBoundary(n, Math.exp(logRho), alpha), Math.log(1e-3), Math.log(Math.max(10, 10 * n)), 1e-8);
  return Math.exp(r.x);
}

export interface SequenceInterval {
  lower: number;
  upper: number;
}

export function confidenceSequence(successes: number, n: number, rho: number, alpha: number): SequenceInterval {
  if (n === 0) return { lower: 0, upper: 1 };
  const half = mixtureBoundary(n, rho, alpha) / n;
  const p = successes / n;
  return { lower: Math.max(0, p - half), upper: Math.min(1, p + half) };
}
