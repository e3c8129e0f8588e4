/**
 * Distinguishability of two candidate models under a design, per trial.
 *
 * For generating model i at its typical parameters θ_i and candidate j, the
 * smallest Kullback–Leibler divergence from i's response distribution to j's
 * over j's free parameters,
 *   D(i‖j) = min_θ E_{x, r ~ i} [log p_i(r | x) − log p_j(r | x, θ)]
 * (Kullback 1959, Information Theory and Statistics, ch. 1, eq. 2.5 for the
 * divergence; its minimiser θ* is the pseudo-true value a maximum-likelihood
 * fit of j converges to on data from i: White 1982, Econometrica 50,
 * "Maximum likelihood estimation of misspecified models"). The expectation
 * runs on the quadrature of expectationGrid.ts; the minimisation is the
 * fitting code's BFGS in the same transformed (unbounded) space.
 *
 * At θ*, the per-trial log-likelihood ratio d = log p_i − log p_j has mean
 * D(i‖j) and a variance; both feed the normal approximation of the chance of
 * choosing the right model (predictedAccuracy.ts).
 */
import { bfgs } from '../numerics/optimize.js';
import { observerFor, observerFromValues, type CandidateModel } from '../fit/candidate.js';
import { toFree, toParameter } from '../fit/transforms.js';
import { nestingOf } from '../fit/nesting.js';
import { expectationGrid, logDensityOn, type ExpectationGrid, type StimulusNode } from './expectationGrid.js';

/** Below this many nats per trial, no realistic study separates two models (10⁵ trials for one nat). */
export const ZERO_DIVERGENCE = 1e-5;

export interface GeneratingGrid {
  model: CandidateModel;
  values: Record<string, number>;
  grid: ExpectationGrid;
}

export function generatingGrid(model: CandidateModel, values: Record<string, number>, nodes: readonly StimulusNode[]): GeneratingGrid {
  return { model, values, grid: expectationGrid(observerFromValues(model, values), nodes) };
}

export interface Divergence {
  generating: string;
  candidate: string;
  /** Minimum over the candidate's free parameters of the per-trial KL divergence (nats). */
  kl: number;
  /** Variance across trials of the per-trial log-likelihood ratio at the minimum. */
  variance: number;
  /** The candidate's pseudo-true parameter values (the minimiser). */
  closest: Record<string, number>;
  evaluations: number;
  converged: boolean;
}

/** Mean and variance of log p_i − log p_j over the grid. */
export function ratioMoments(g: ExpectationGrid, logQ: Float64Array): { mean: number; variance: number } {
  let m = 0;
  for (let i = 0; i < logQ.length; i++) m += g.weight[i] * (g.logDensity[i] - logQ[i]);
  let v = 0;
  for (let i = 0; i < logQ.length; i++) {
    const d = g.logDensity[i] - logQ[i] - m;
    v += g.weight[i] * d * d;
  }
  return { mean: m, variance: v };
}

/**
 * Start the search where the generating model's shared parameters are, and,
 * when the candidate's family contains the generating one (fit/nesting.ts),
 * at the loss parameter value that reproduces it: an equivalent or nesting
 * candidate then starts at its optimum and costs one evaluation.
 */
function startValues(candidate: CandidateModel, generating: CandidateModel, truth: Record<string, number>): number[] {
  const nest = nestingOf(candidate.lossFamily, generating.lossFamily);
  const at = nest && nest.outer === candidate.lossFamily ? /^(\w+) = (-?[\d.]+)$/.exec(nest.at) : null;
  const inner: Record<string, number> = at ? { [`loss.${at[1]}`]: Number(at[2]) } : {};
  return candidate.free.map((p) => {
    const v = p.name in inner ? inner[p.name] : p.name in truth ? truth[p.name] : candidate.base[p.name];
    return toFree(p, Math.min(p.upper, Math.max(p.lower, v)));
  });
}

export function minimumDivergence(gen: GeneratingGrid, candidate: CandidateModel, nodes: readonly StimulusNode[], maxEvaluations = 150): Divergence {
  const g = gen.grid;
  const klAt = (z: readonly number[]): number => {
    try {
      const theta = candidate.free.map((p, i) => toParameter(p, z[i]));
      return ratioMoments(g, logDensityOn(observerFor(candidate, theta), g, nodes)).mean;
    } catch {
      return Infinity;
    }
  };
  const z0 = startValues(candidate, gen.model, gen.values);
  let best = { x: z0, value: klAt(z0), evaluations: 1, converged: true };
  let evaluations = 1;
  // A second start at the candidate's own scenario values guards against a local minimum,
  // which would overstate the divergence (and call a pair separable that is not).
  const zBase = candidate.free.map((p) => toFree(p, Math.min(p.upper, Math.max(p.lower, candidate.base[p.name]))));
  const starts = zBase.some((z, i) => Math.abs(z - z0[i]) > 1e-6) ? [z0, zBase] : [z0];
  for (const start of starts) {
    if (candidate.free.length === 0 || best.value <= ZERO_DIVERGENCE / 10) break;
    const r = bfgs(klAt, start, { maxEvaluations, initialStep: 1, gradientTolerance: 1e-7, gradientStep: 1e-4, fTolerance: 1e-9 });
    evaluations += r.evaluations;
    if (r.value < best.value) best = { x: r.x, value: r.value, evaluations, converged: r.converged };
  }
  best.evaluations = evaluations;
  const theta = candidate.free.map((p, i) => toParameter(p, best.x[i]));
  const logQ = logDensityOn(observerFor(candidate, theta), g, nodes);
  const { mean, variance } = ratioMoments(g, logQ);
  const closest: Record<string, number> = {};
  candidate.free.forEach((p, i) => (closest[p.name] = theta[i]));
  return { generating: gen.model.name, candidate: candidate.name, kl: Math.max(0, mean), variance, closest, evaluations: best.evaluations, converged: best.converged };
}

export type PairLabel = 'equivalent' | 'nested' | 'separable';

/**
 * Zero both ways with equal parameter counts: equivalent (no trial count can
 * separate them). Zero one way, or both ways with different counts: nested
 * (the richer model reproduces the simpler one, which is then chosen only
 * through the criterion's penalty). Otherwise separable.
 */
export function pairLabel(klAB: number, klBA: number, kA: number, kB: number): PairLabel {
  const zeroAB = klAB < ZERO_DIVERGENCE;
  const zeroBA = klBA < ZERO_DIVERGENCE;
  if (zeroAB && zeroBA) return kA === kB ? 'equivalent' : 'nested';
  if (zeroAB || zeroBA) return 'nested';
  return 'separable';
}
