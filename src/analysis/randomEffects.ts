/**
 * Random-effects Bayesian model selection across participants.
 *
 * Each participant n is assumed to use one model m_n, drawn from the group's
 * model frequencies r ~ Dirichlet(α₀); the data of participant n under model k
 * enter only through a log-evidence L[n][k] (for instance −BIC/2, or a
 * cross-validated log-likelihood). The variational Bayes scheme of
 * Stephan, Penny, Daunizeau, Moran & Friston (2009), "Bayesian model selection
 * for group studies", NeuroImage 46:1004–1017 (eqs. 13–14), alternates
 *   g[n][k] ∝ exp(L[n][k] + ψ(α_k) − ψ(Σα))      (posterior model of participant n)
 *   α_k     = α₀_k + Σ_n g[n][k]                   (posterior Dirichlet)
 * until α stops moving. From the Dirichlet posterior:
 *   expected frequency   E[r_k] = α_k / Σα
 *   exceedance prob.     P(r_k > r_j for all j ≠ k)
 * The Bayesian omnibus risk of Rigoux, Stephan, Friston & Daunizeau (2014),
 * "Bayesian model selection for group studies — revisited", NeuroImage
 * 84:971–985, is the posterior probability that all frequencies are equal
 * (null model, r = 1/K), from the free energy F₁ of the random-effects model and
 * the exact log evidence F₀ of the null, with equal prior odds:
 *   BOR = 1 / (1 + exp(F₁ − F₀)),
 * and the protected exceedance probability is PXP_k = (1 − BOR)·EP_k + BOR/K.
 *
 * Exceedance probabilities are computed deterministically (no Monte Carlo):
 *  - two models: EP₁ = P(r₁ > ½) = 1 − I_½(α₁, α₂), the regularised incomplete
 *    Beta function (r₁ ~ Beta(α₁, α₂)), from jstat (good to ~1e-10);
 *  - more models: with r = G/ΣG, G_k ~ Gamma(α_k, 1) independent,
 *    EP_k = ∫₀^∞ f_k(x) Π_{j≠k} F_j(x) dx, a one-dimensional integral evaluated
 *    by composite Simpson's rule (step ≤ 0.1·√min α, ≥ 2000 panels; every α ≥ 1
 *    so every integrand is bounded and smooth) over mean ± 10 sd (+40 on the
 *    upper end). Accuracy is ~1e-9, far below anything the numbers are used for.
 *
 * Known limitation of the method (not of this code): the mean-field Dirichlet is
 * narrower than the exact posterior, so exceedance is somewhat more extreme than
 * a Gibbs sampler's (test/randomEffects.test.ts measures it), and the free energy
 * is a lower bound, which makes the omnibus risk conservative (too high).
 *
 * Public API (kept small; other modules depend on it):
 *   randomEffectsSelection(logEvidence, options?) → RandomEffectsSelection
 *   exceedanceProbabilities(alpha)                → number[]
 * Both are pure; they throw a plain Error for a malformed table (callers that
 * read user files validate first and raise their own UserError).
 */
import jStat from 'jstat';

export interface RandomEffectsOptions {
  /** Prior Dirichlet count α₀ for every model (default 1: flat over frequencies). */
  priorCount?: number;
  /** Stop when no α_k moves by more than this between iterations (default 1e-10). */
  tolerance?: number;
  /** Give up after this many iterations (default 10 000); `converged` says which. */
  maxIterations?: number;
}

export interface RandomEffectsSelection {
  /** Number of participants (rows) and models (columns) in the log-evidence table. */
  participants: number;
  models: number;
  /** Posterior Dirichlet parameters α_k over model frequencies. */
  dirichlet: number[];
  /** Expected model frequencies α_k / Σα (sum to 1). */
  expectedFrequency: number[];
  /** Exceedance probabilities P(r_k is the largest frequency) (sum to 1). */
  exceedance: number[];
  /** Bayesian omnibus risk: posterior probability that all frequencies are equal. */
  omnibusRisk: number;
  /** Protected exceedance probabilities (1 − BOR)·EP_k + BOR/K (sum to 1). */
  protectedExceedance: number[];
  /** Posterior probability of each model for each participant, g[n][k]. */
  participantModelProbability: number[][];
  /** Variational free energy of the random-effects model (lower bound on its log evidence). */
  freeEnergy: number;
  /** Exact log evidence of the null model (all frequencies 1/K). */
  nullLogEvidence: number;
  /** How exceedance was computed: exact Beta cdf (K = 2) or Simpson quadrature (K > 2). */
  exceedanceMethod: 'beta-cdf' | 'quadrature';
  iterations: number;
  converged: boolean;
}

/** Digamma ψ(x) for x > 0: recurrence up to x ≥ 6, then the asymptotic series (Abramowitz & Stegun 6.3.5, 6.3.18). */
function digamma(x: number): number {
  let shift = 0;
  while (x < 6) {
    shift -= 1 / x;
    x += 1;
  }
  const inv2 = 1 / (x * x);
  const series =
    inv2 * (1 / 12 - inv2 * (1 / 120 - inv2 * (1 / 252 - inv2 * (1 / 240 - inv2 * (1 / 132)))));
  return shift + Math.log(x) - 0.5 / x - series;
}

function logSumExp(values: readonly number[]): number {
  let max = -Infinity;
  for (const v of values) if (v > max) max = v;
  if (max === -Infinity) return -Infinity;
  let sum = 0;
  for (const v of values) sum += Math.exp(v - max);
  return max + Math.log(sum);
}

/** log of the multivariate Beta function B(α) = Π Γ(α_k) / Γ(Σα). */
function logMultivariateBeta(alpha: readonly number[]): number {
  let total = 0;
  let sum = 0;
  for (const a of alpha) {
    total += jStat.gammaln(a);
    sum += a;
  }
  return total - jStat.gammaln(sum);
}

function checkTable(logEvidence: readonly (readonly number[])[]): number {
  if (logEvidence.length === 0) throw new Error('random-effects selection needs at least one participant');
  const k = logEvidence[0]!.length;
  if (k < 2) throw new Error('random-effects selection needs at least two models');
  logEvidence.forEach((row, n) => {
    if (row.length !== k) throw new Error(`log-evidence row ${n} has ${row.length} models, expected ${k}`);
    row.forEach((v, j) => {
      if (!Number.isFinite(v)) throw new Error(`log-evidence row ${n}, model ${j} is not a finite number (${v})`);
    });
  });
  return k;
}

/**
 * Exceedance probabilities of a Dirichlet(α): P(r_k > r_j for all j ≠ k).
 * Exact Beta cdf for two models, Simpson quadrature of the Gamma representation
 * for more (see the file header). Every α_k must be ≥ 1 for the quadrature path
 * (true of any posterior with α₀ ≥ 1).
 */
export function exceedanceProbabilities(alpha: readonly number[]): number[] {
  if (alpha.length < 2) throw new Error('exceedance needs at least two models');
  if (alpha.length === 2) {
    const first = 1 - jStat.ibeta(0.5, alpha[0]!, alpha[1]!);
    return [first, 1 - first];
  }
  return exceedanceByQuadrature(alpha);
}

function exceedanceByQuadrature(alpha: readonly number[]): number[] {
  const k = alpha.length;
  for (const a of alpha) if (!(a >= 1)) throw new Error(`exceedance by quadrature needs every α ≥ 1 (got ${a})`);
  let lo = Infinity;
  let hi = 0;
  for (const a of alpha) {
    const sd = Math.sqrt(a);
    lo = Math.min(lo, a - 10 * sd);
    hi = Math.max(hi, a + 10 * sd + 40);
  }
  lo = Math.max(0, lo);
  const step = 0.1 * Math.sqrt(Math.min(...alpha));
  let panels = Math.max(2000, Math.ceil((hi - lo) / step));
  if (panels % 2 === 1) panels += 1;
  const h = (hi - lo) / panels;
  const logNorm = alpha.map((a) => -jStat.gammaln(a));
  const result = new Array<number>(k).fill(0);
  const cdf = new Array<number>(k);
  for (let i = 0; i <= panels; i++) {
    const x = lo + i * h;
    const weight = i === 0 || i === panels ? 1 : i % 2 === 1 ? 4 : 2;
    for (let j = 0; j < k; j++) cdf[j] = x > 0 ? jStat.lowRegGamma(alpha[j]!, x) : 0;
    for (let j = 0; j < k; j++) {
      const a = alpha[j]!;
      // Gamma(a, 1) density; at x = 0 only a = 1 contributes (density 1).
      const pdf = x > 0 ? Math.exp(logNorm[j]! + (a - 1) * Math.log(x) - x) : a === 1 ? 1 : 0;
      if (pdf === 0) continue;
      let others = 1;
      for (let m = 0; m < k; m++) if (m !== j) others *= cdf[m]!;
      result[j]! += weight * pdf * others;
    }
  }
  // Normalise away the (tiny) quadrature error so the probabilities sum to 1.
  const total = result.reduce((s, v) => s + v, 0);
  return result.map((v) => v / total);
}

/**
 * Variational Bayes random-effects model selection (Stephan et al. 2009) with the
 * omnibus risk and protected exceedance (Rigoux et al. 2014).
 * @param logEvidence rows = participants, columns = models (same order in every row).
 */
export function randomEffectsSelection(
  logEvidence: readonly (readonly number[])[],
  options: RandomEffectsOptions = {},
): RandomEffectsSelection {
  const k = checkTable(logEvidence);
  const n = logEvidence.length;
  const priorCount = options.priorCount ?? 1;
  const tolerance = options.tolerance ?? 1e-10;
  const maxIterations = options.maxIterations ?? 10_000;
  if (!(priorCount > 0)) throw new Error(`priorCount must be positive (got ${priorCount})`);
  const prior = new Array<number>(k).fill(priorCount);

  let alpha = prior.slice();
  let g: number[][] = [];
  let iterations = 0;
  let converged = false;
  const posteriorAssignments = (a: readonly number[]): number[][] => {
    const psiSum = digamma(a.reduce((s, v) => s + v, 0));
    const expectedLogR = a.map((v) => digamma(v) - psiSum);
    return logEvidence.map((row) => {
      const logU = row.map((v, j) => v + expectedLogR[j]!);
      const norm = logSumExp(logU);
      return logU.map((v) => Math.exp(v - norm));
    });
  };
  while (iterations < maxIterations) {
    iterations += 1;
    g = posteriorAssignments(alpha);
    const next = prior.map((a0, j) => a0 + g.reduce((s, row) => s + row[j]!, 0));
    const change = Math.max(...next.map((v, j) => Math.abs(v - alpha[j]!)));
    alpha = next;
    if (change <= tolerance) {
      converged = true;
      break;
    }
  }
  // g consistent with the final α, so the free energy below is evaluated at one point.
  g = posteriorAssignments(alpha);

  const alphaSum = alpha.reduce((s, v) => s + v, 0);
  const psiSum = digamma(alphaSum);
  const expectedLogR = alpha.map((v) => digamma(v) - psiSum);
  // Free energy F₁ = E[log p(y|m)] + E[log p(m|r)] + E[log p(r|α₀)] − E[log q(m)] − E[log q(r)].
  let freeEnergy = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) {
      const gij = g[i]![j]!;
      if (gij > 0) freeEnergy += gij * (logEvidence[i]![j]! + expectedLogR[j]! - Math.log(gij));
    }
  }
  for (let j = 0; j < k; j++) freeEnergy += (prior[j]! - alpha[j]!) * expectedLogR[j]!;
  freeEnergy += logMultivariateBeta(alpha) - logMultivariateBeta(prior);

  const nullLogEvidence = logEvidence.reduce((s, row) => s + logSumExp(row) - Math.log(k), 0);
  const omnibusRisk = 1 / (1 + Math.exp(freeEnergy - nullLogEvidence));
  const exceedance = exceedanceProbabilities(alpha);
  const protectedExceedance = exceedance.map((ep) => (1 - omnibusRisk) * ep + omnibusRisk / k);

  return {
    participants: n,
    models: k,
    dirichlet: alpha,
    expectedFrequency: alpha.map((v) => v / alphaSum),
    exceedance,
    omnibusRisk,
    protectedExceedance,
    participantModelProbability: g,
    freeEnergy,
    nullLogEvidence,
    exceedanceMethod: k === 2 ? 'beta-cdf' : 'quadrature',
    iterations,
    converged,
  };
}
