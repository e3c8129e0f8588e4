/**
 * Expected Fisher information per trial at a model's typical parameters, in
 * the fitting code's transformed (unbounded) space:
 *   I(z) = E_{x, r}[ s(z) s(z)ᵀ ],  s = ∂ log p(r | x, z) / ∂z
 * (the outer-product form; Lehmann & Casella 1998, Theory of Point
 * Estimation, §2.5, eq. 5.10). Scores are central differences of the log
 * density at every cell of the expectation grid. The asymptotic covariance of
 * the maximum-likelihood estimate after n trials is I⁻¹/n (ibid. §6.3), which
 * gives predicted standard errors and the correlations between parameters
 * (trade-offs). A near-singular I (smallest/largest eigenvalue below
 * NEAR_SINGULAR) means some combination of parameters is hardly informed by
 * the design.
 */
import { invertSymmetric } from '../numerics/hessian.js';
import { observerFor, type CandidateModel } from '../fit/candidate.js';
import { jacobian, toFree, toParameter } from '../fit/transforms.js';
import { logDensityOn, type StimulusNode } from './expectationGrid.js';
import type { GeneratingGrid } from './distinguishability.js';

export const NEAR_SINGULAR = 1e-6;
const STEP = 1e-3;

export interface FisherSummary {
  model: string;
  parameters: string[];
  /** Per-trial information matrix in the transformed space. */
  information: number[][];
  /** Smallest over largest eigenvalue. */
  conditionRatio: number;
  nearSingular: boolean;
  /** Correlations of the estimates (from I⁻¹); null when singular. */
  correlation: (number | null)[][] | null;
  /** Per-trial standard deviation of each estimate: SE at n trials = perTrialSe/√n (transformed space). */
  perTrialFreeSe: (number | null)[];
  /** The same on the parameter scale (delta method), at the typical values. */
  perTrialSe: (number | null)[];
}

export function fisherInformation(gen: GeneratingGrid, nodes: readonly StimulusNode[]): FisherSummary {
  const model: CandidateModel = gen.model;
  const g = gen.grid;
  const k = model.free.length;
  const z0 = model.free.map((p) => toFree(p, gen.values[p.name]));
  const scores: Float64Array[] = [];
  for (let a = 0; a < k; a++) {
    const at = (dz: number) => {
      const z = z0.slice();
      z[a] += dz;
      return logDensityOn(observerFor(model, model.free.map((p, i) => toParameter(p, z[i]))), g, nodes);
    };
    const up = at(STEP);
    const down = at(-STEP);
    const s = new Float64Array(up.length);
    for (let i = 0; i < s.length; i++) s[i] = (up[i] - down[i]) / (2 * STEP);
    scores.push(s);
  }
  const info: number[][] = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let a = 0; a < k; a++)
    for (let b = a; b < k; b++) {
      let acc = 0;
      for (let i = 0; i < g.weight.length; i++) acc += g.weight[i] * scores[a][i] * scores[b][i];
      info[a][b] = acc;
      info[b][a] = acc;
    }
  const inv = k > 0 ? invertSymmetric(info) : null;
  const ev = inv?.eigen.values ?? [];
  const conditionRatio = ev.length ? ev[0] / ev[ev.length - 1] : NaN;
  const nearSingular = !inv || !(conditionRatio > NEAR_SINGULAR);
  const cov = inv?.inverse ?? null;
  const freeSe = model.free.map((_, i) => (cov && cov[i][i] > 0 ? Math.sqrt(cov[i][i]) : null));
  return {
    model: model.name,
    parameters: model.free.map((p) => p.name),
    information: info,
    conditionRatio,
    nearSingular,
    correlation: cov ? cov.map((row, i) => row.map((v, j) => (freeSe[i] && freeSe[j] ? v / (freeSe[i]! * freeSe[j]!) : null))) : null,
    perTrialFreeSe: freeSe,
    perTrialSe: freeSe.map((se, i) => (se === null ? null : Math.abs(jacobian(model.free[i], z0[i])) * se)),
  };
}
