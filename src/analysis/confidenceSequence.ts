/**
 * Anytime-valid confidence sequence for a success probability, so the
 * interval stays valid however often it is looked at and whenever sampling
 * stops (the adaptive sweep looks after every round).
 *
 * Method: Robbins' method of mixtures (Robbins 1970, Ann. Math. Stat. 41,
 * "Statistical methods related to the law of the iterated logarithm"), with
 * the conjugate Beta(a, b) mixture for Bernoulli outcomes as in Howard,
 * Ramdas, McAuliffe & Sekhon (2021), Annals of Statistics 49, "Time-uniform,
 * nonparametric, nonasymptotic confidence sequences" (the beta-binomial
 * mixture; from memory). With S successes in n trials,
 *   M_n(p) = ∫ q^S (1−q)^(n−S) dBeta(q; a, b) / (p^S (1−p)^(n−S))
 *          = B(a+S, b+n−S) / B(a, b) / (p^S (1−p)^(n−S))
 * is a nonnegative martingale with mean 1 under p, so by Ville's inequality
 * P(∃n: M_n(p) ≥ 1/α) ≤ α, and {p : M_n(p) < 1/α} holds for all n at once
 * with probability ≥ 1 − α. −log M_n is concave in p, so the set is an
 * interval around S/n, found by bisection on each side. Unlike a normal
 * mixture it narrows near 0 and 1, where recovery rates near a high target live.
 */
import jStat from 'jstat';

const logBeta = (x: number, y: number) => jStat.gammaln(x) + jStat.gammaln(y) - jStat.gammaln(x + y);

/** log M_n(p) of the Beta(a, b) mixture. */
export function logMixtureRatio(successes: number, n: number, p: number, a = 1, b = 1): number {
  const f = n - successes;
  const logLik = (successes > 0 ? successes * Math.log(p) : 0) + (f > 0 ? f * Math.log(1 - p) : 0);
  return logBeta(a + successes, b + f) - logBeta(a, b) - logLik;
}

export interface SequenceInterval {
  lower: number;
  upper: number;
}

export function confidenceSequence(successes: number, n: number, alpha: number, a = 1, b = 1): SequenceInterval {
  if (n === 0) return { lower: 0, upper: 1 };
  const c = Math.log(1 / alpha);
  const phat = successes / n;
  const f = n - successes;
  const base = logBeta(a + successes, b + f) - logBeta(a, b);
  const logM = (p: number) => base - (successes > 0 ? successes * Math.log(p) : 0) - (f > 0 ? f * Math.log(1 - p) : 0);
  // log M is smallest at p̂ (≤ 0 for the uniform mixture) and grows towards each end.
  const solve = (inside: number, outside: number): number => {
    for (let it = 0; it < 60; it++) {
      const mid = 0.5 * (inside + outside);
      if (logM(mid) < c) inside = mid;
      else outside = mid;
    }
    return 0.5 * (inside + outside);
  };
  const lower = successes === 0 || logM(1e-300) < c ? 0 : solve(phat, 0);
  const upper = successes === n || logM(1 - 1e-16) < c ? 1 : solve(phat, 1);
  return { lower, upper };
}
