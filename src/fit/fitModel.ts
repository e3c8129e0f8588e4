/**
 * Maximum-likelihood fit of one candidate model to one dataset.
 *
 * Starting points: a Latin hypercube over the central 90% of each parameter's
 * transformed range, seeded from the content of (dataset, model). The
 * generating parameters are never a start. From each start a BFGS search with
 * numerical gradients runs within a budget of objective evaluations (never
 * wall time); a start that stalls (a non-finite region in the way) continues
 * with Nelder–Mead; a start that stops with a parameter on its transform's
 * plateau next to a bound is tried again from inside (leavePlateaus). The
 * best start is kept. At the optimum: log-likelihood,
 * AIC/AICc/BIC, and standard errors from a numerical Hessian in the free
 * (transformed) space, mapped to 95% intervals on the parameter scale.
 * Failures are recorded with a reason and never thrown past the fit.
 */
import { bfgs, nelderMead, type MinimizeOptions, type MinimizeResult } from '../numerics/optimize.js';
import { invertSymmetric, numericalHessian } from '../numerics/hessian.js';
import { latinHypercube } from '../numerics/latinHypercube.js';
import { streamFromKey } from '../numerics/rng.js';
import { lapseFreeTerms, logLikelihoodFromTerms, type LapseFreeTerms } from '../observer/responseDensity.js';
import type { Dataset } from '../observer/observer.js';
import { observerFor, type CandidateModel } from './candidate.js';
import { jacobian, toFree, toParameter } from './transforms.js';
import { aic, aicc, bic } from './criteria.js';
import { fitSeedKey } from './contentSeed.js';

export interface FitOptions {
  starts?: number;
  /**
   * Objective evaluations per search (gradient probes included); a start that
   * stops on a bound plateau continues with a budget of its own (at most twice).
   */
  evaluationsPerStart?: number;
  /** Skip the Hessian (e.g. inside cross-validation). */
  skipUncertainty?: boolean;
  /** Extra text mixed into the start seed (cross-validation folds). */
  seedSalt?: string;
}

export interface ParameterEstimate {
  name: string;
  value: number;
  /** Standard error on the parameter scale (delta method); NaN when unavailable. */
  se: number;
  lower95: number;
  upper95: number;
  /** Value in the free (transformed) space and its standard error there. */
  free: number;
  freeSe: number;
  atBound: boolean;
}

export interface StartRecord {
  start: number[];
  negLogLik: number;
  evaluations: number;
  converged: boolean;
  reason: string;
}

export interface FitResult {
  model: string;
  status: 'ok' | 'failed';
  reason: string;
  logLikelihood: number;
  k: number;
  n: number;
  aic: number;
  aicc: number;
  bic: number;
  parameters: ParameterEstimate[];
  /** Smallest/largest Hessian eigenvalue; tiny means a flat (non-identified) direction. */
  hessianRatio: number;
  flatDirection: boolean;
  starts: StartRecord[];
  evaluations: number;
}

/** |z| beyond this puts a parameter within ~0.7% of a bound on its transformed scale. */
const AT_BOUND_Z = 5;
const FLAT_RATIO = 1e-8;

/**
 * Lapse-free likelihood terms of the last few parameter vectors, keyed by every
 * free value except the lapse rate: gradient and Hessian probes along the lapse
 * rate then cost a sum over trials instead of a new estimate curve. The values
 * are exactly those a fresh evaluation would give.
 */
const TERM_CACHE_SIZE = 4;
/**
 * The estimate curve does not depend on the motor sd (for an observer that is
 * not motor-aware) except through its refinement tolerance, 10⁻⁴ σm: a point
 * whose σm differs by less than this fraction from a cached point's, all else
 * equal (a gradient or Hessian probe along σm), reuses that point's curves
 * and rebuilds only the measurement grids and trial integrals. Its curve then
 * meets the tolerance of a σm within 1% of its own (the σm the curves were
 * built at is what is compared, so chains of small steps do not stretch it).
 * The log-likelihood equals a fresh evaluation's wherever refinement would
 * choose the same nodes (the bench cases: to 1e-12); where a 1% change of
 * tolerance moves a node it differs by the curve's interpolation error
 * (measured up to 1.7e−5 nats on a p = 0.5 power-loss case), the size of the
 * quadrature roughness the gradient step is chosen to see past. The same fit
 * always makes the same calls in the same order, so results stay
 * reproducible.
 */
const CURVE_REUSE = 0.01;
/** One-sided gradient probes while the gradient exceeds this many tolerances (see bfgs). */
const FORWARD_DIFFERENCE_FACTOR = 30;

export function negLogLikObjective(model: CandidateModel, data: Dataset, failures: string[]): (z: readonly number[]) => number {
  const lapseIndex = model.free.findIndex((p) => p.name === 'lapseRate');
  const motorIndex = model.free.findIndex((p) => p.name === 'motorSd');
  // curveMotorSd: the motor sd the entry's curves were built at (not the entry's own, when it
  // reused them), so a chain of small steps cannot carry one curve far from where it was built.
  const cache: { key: string; curveKey: string; curveMotorSd: number; terms: LapseFreeTerms }[] = [];
  return (z) => {
    try {
      const theta = model.free.map((p, i) => toParameter(p, z[i]));
      const key = theta.map((t, i) => (i === lapseIndex ? '' : String(t))).join(',');
      let terms = cache.find((e) => e.key === key)?.terms;
      const obs = observerFor(model, theta);
      if (!terms) {
        const curveKey = theta.map((t, i) => (i === lapseIndex || i === motorIndex ? '' : String(t))).join(',');
        const near = obs.motorAware ? undefined : cache.find((e) => e.curveKey === curveKey && Math.abs(obs.motorSd / e.curveMotorSd - 1) <= CURVE_REUSE);
        terms = lapseFreeTerms(obs, data, near?.terms.curves);
        cache.push({ key, curveKey, curveMotorSd: near ? near.curveMotorSd : obs.motorSd, terms });
        if (cache.length > TERM_CACHE_SIZE) cache.shift();
      }
      const ll = logLikelihoodFromTerms(terms, obs.lapseRate);
      if (!Number.isFinite(ll)) {
        if (failures.length < 5) failures.push(`non-finite log-likelihood at ${theta.map((t) => t.toPrecision(4)).join(', ')}`);
        return Infinity;
      }
      return -ll;
    } catch (e) {
      if (failures.length < 5) failures.push((e as Error).message);
      return Infinity;
    }
  };
}

/**
 * A start whose search comes within JOIN_Z (in every transformed coordinate)
 * of an optimum an earlier start converged to, at a value within JOIN_F of
 * it, has reached that optimum's basin: it stops there and is recorded as
 * reaching it (a clustering multistart in the sense of Rinnooy Kan & Timmer
 * 1987, Math. Programming 39:27). Continuing would only reproduce the same
 * optimum, at the cost of its final, central-difference iterations.
 */
const JOIN_Z = 0.05;
const JOIN_F = 1e-3;

/** Beyond this |z| a coordinate sits on its transform's plateau: θ is within 0.25% (of the range, in σ(z)) of a bound. */
const PLATEAU_Z = 6;
/** Where a coordinate on a plateau is pulled back to, to see whether the interior does better. */
const PULL_Z = 4;
/** Improvement (nats) that counts as real rather than quadrature roughness (≈1e-6 here). */
const PLATEAU_GAIN = 1e-4;
/** Continuations per start (a continuation can stop on another plateau). */
const PLATEAU_ROUNDS = 2;

/**
 * A search that stops with a coordinate far out on the logistic transform's
 * plateau may have stopped only because the gradient vanishes there
 * (dθ/dz ≈ e^−|z|), not because the bound is best: a start that first drives
 * the sensory noise to its bound can run the exponent onto its plateau and
 * stay there 1–2 log-likelihood units below the optimum; a lapse rate on its
 * lower plateau likewise (measured: 8 units). So each such coordinate is
 * pulled back to |z| = PULL_Z, and where several are, all of them together
 * as well, one evaluation each; where that does better, the search
 * continues from the best of them with a fresh budget. A bound that really is
 * best costs those evaluations only (a lapse-only probe costs a sum over the
 * trials). Each continuation has a budget of its own, so a start can use up to
 * three budgets. Measured on 12 simulated power-loss datasets (300 trials, 4
 * starts): some start stopped more than 1e−3 below the best optimum on 6 of
 * them without this and on 4 with it, for 3% more evaluations.
 */
export function leavePlateaus(f: (z: readonly number[]) => number, r: MinimizeResult, budget: number, stopAt?: MinimizeOptions['stopAt']): MinimizeResult {
  let current = r;
  let evaluations = r.evaluations;
  for (let round = 0; round < PLATEAU_ROUNDS && Number.isFinite(current.value); round++) {
    const x = current.x;
    const pull = (indices: number[]) => x.map((zi, i) => (indices.includes(i) ? Math.sign(zi) * PULL_Z : zi));
    const tried: { z: number[]; v: number }[] = [];
    for (let i = 0; i < x.length; i++) {
      if (Math.abs(x[i]) > PLATEAU_Z) tried.push({ z: pull([i]), v: NaN });
    }
    for (const t of tried) t.v = f(t.z);
    // Two coordinates can each hold the other on its plateau (a motor sd and a lapse rate both at
    // their lower bounds, neither gaining when pulled alone): pull them all together too.
    if (tried.length > 1) {
      const z = pull(x.map((_, i) => i).filter((i) => Math.abs(x[i]) > PLATEAU_Z));
      tried.push({ z, v: f(z) });
    }
    evaluations += tried.length;
    const from = tried.reduce<{ z: number[]; v: number } | null>((b, t) => (t.v < current.value - PLATEAU_GAIN && (!b || t.v < b.v) ? t : b), null);
    if (!from) break;
    const again = bfgs(f, from.z, { ...searchOptions(budget), stopAt });
    evaluations += again.evaluations;
    if (!(again.value < current.value)) break;
    current = { ...again, reason: `${current.reason}; left a bound plateau, then ${again.reason}` };
  }
  return { ...current, evaluations };
}

/**
 * Gradient step 1e-3: large enough that quadrature-level roughness of the
 * likelihood (≲1e-5) cannot dominate the difference quotient; the gradient
 * tolerance (2e-5·|log L|) sits above that roughness, and at the Hessian's
 * curvature it moves the parameters by far less than one standard error.
 */
function searchOptions(budget: number) {
  return { maxEvaluations: budget, initialStep: 1, gradientTolerance: 2e-5, gradientStep: 1e-3, forwardDifferenceFactor: FORWARD_DIFFERENCE_FACTOR };
}

function failedFit(model: CandidateModel, data: Dataset, reason: string, starts: StartRecord[], evaluations: number): FitResult {
  return {
    model: model.name,
    status: 'failed',
    reason,
    logLikelihood: -Infinity,
    k: model.free.length,
    n: data.stimulus.length,
    aic: Infinity,
    aicc: Infinity,
    bic: Infinity,
    parameters: [],
    hessianRatio: NaN,
    flatDirection: false,
    starts,
    evaluations,
  };
}

/**
 * Why the dataset cannot be fitted with this model, or null. The likelihood
 * floors every trial at 1e-300, so a NaN response would otherwise be scored as
 * a finite (and meaningless) −690.8 and the fit reported as 'ok'.
 */
function datasetProblem(model: CandidateModel, data: Dataset): string | null {
  const n = data.stimulus.length;
  if (data.condition.length !== n || data.response.length !== n)
    return `dataset arrays differ in length (stimulus ${n}, condition ${data.condition.length}, response ${data.response.length})`;
  for (let t = 0; t < n; t++) {
    const c = data.condition[t];
    if (!(c >= 0 && c < model.noise.length)) return `trial ${t}: condition ${c} is not one of the model's ${model.noise.length} condition(s)`;
    if (!Number.isFinite(data.stimulus[t])) return `trial ${t}: stimulus is not a finite number (${data.stimulus[t]})`;
    if (!Number.isFinite(data.response[t])) return `trial ${t}: response is not a finite number (${data.response[t]})`;
  }
  return null;
}

export function fitModel(model: CandidateModel, data: Dataset, options: FitOptions = {}): FitResult {
  const k = model.free.length;
  const n = data.stimulus.length;
  const problem = datasetProblem(model, data);
  if (problem) return failedFit(model, data, problem, [], 0);
  const nStarts = options.starts ?? 4;
  const budget = options.evaluationsPerStart ?? 150 + 60 * k;
  const failures: string[] = [];
  const f = negLogLikObjective(model, data, failures);
  const rand = streamFromKey(fitSeedKey(data, model, options.seedSalt ?? ''));
  const starts: StartRecord[] = [];
  let best: MinimizeResult | null = null;
  let evaluations = 0;
  if (k === 0) {
    const value = f([]);
    evaluations = 1;
    if (!Number.isFinite(value)) return failedFit(model, data, failures[0] ?? 'non-finite objective', starts, evaluations);
    best = { x: [], value, evaluations: 1, converged: true, reason: 'no free parameters' };
  } else {
    const design = latinHypercube(nStarts, k, rand);
    const optima: { x: number[]; value: number; start: number }[] = [];
    // The optimum the current start joined (set once, by the search's stopAt; reset per start).
    let joined: (typeof optima)[number] | null = null;
    const stopAt = (x: readonly number[], fx: number): string | null => {
      const o = optima.find((q) => fx <= q.value + JOIN_F && fx >= q.value && x.every((xi, i) => Math.abs(xi - q.x[i]) <= JOIN_Z));
      if (!o) return null;
      joined = o;
      return `reached the optimum of start ${o.start} (stopped ${(fx - o.value).toExponential(1)} above it)`;
    };
    for (const u of design) {
      // Central 90% of each transformed range: z = logit(0.05 + 0.9 u).
      const z0 = u.map((ui) => {
        const p = 0.05 + 0.9 * ui;
        return Math.log(p / (1 - p));
      });
      joined = null;
      let r = bfgs(f, z0, { ...searchOptions(budget), stopAt });
      if (!joined) {
        if (!r.converged && r.evaluations < budget && Number.isFinite(r.value)) {
          const nm = nelderMead(f, r.x, { maxEvaluations: budget - r.evaluations, initialStep: 0.3, restart: false });
          r = { ...nm, evaluations: r.evaluations + nm.evaluations, reason: `${r.reason}; then ${nm.reason}` };
        }
        r = leavePlateaus(f, r, budget, stopAt);
      }
      const reached = joined as (typeof optima)[number] | null;
      if (reached && reached.value <= r.value) r = { ...r, x: reached.x.slice(), value: reached.value };
      else {
        // A gradient probe of the joining search may have gone below the optimum it joined: then
        // that point is this start's own, better answer.
        if (reached) r = { ...r, reason: `${r.reason}; its own best point was lower and is kept` };
        if (r.converged && Number.isFinite(r.value)) optima.push({ x: r.x.slice(), value: r.value, start: starts.length + 1 });
      }
      evaluations += r.evaluations;
      starts.push({ start: z0.map((z, i) => toParameter(model.free[i], z)), negLogLik: r.value, evaluations: r.evaluations, converged: r.converged, reason: r.reason });
      if (Number.isFinite(r.value) && (!best || r.value < best.value)) best = r;
    }
  }
  if (!best || !Number.isFinite(best.value)) return failedFit(model, data, failures[0] ?? 'no start reached a finite log-likelihood', starts, evaluations);
  const logLik = -best.value;
  const zHat = best.x;
  const parameters: ParameterEstimate[] = model.free.map((p, i) => {
    const value = toParameter(p, zHat[i]);
    return { name: p.name, value, se: NaN, lower95: NaN, upper95: NaN, free: zHat[i], freeSe: NaN, atBound: Math.abs(zHat[i]) > AT_BOUND_Z };
  });
  let hessianRatio = NaN;
  let flatDirection = false;
  if (k > 0 && !options.skipUncertainty) {
    const H = numericalHessian(f, zHat, 1e-2);
    evaluations += 1 + 2 * k * k;
    const inv = invertSymmetric(H);
    if (inv) {
      const ev = inv.eigen.values;
      hessianRatio = ev[0] / ev[ev.length - 1];
      flatDirection = hessianRatio < FLAT_RATIO;
      parameters.forEach((pe, i) => {
        const seZ = Math.sqrt(inv.inverse[i][i]);
        const p = model.free[i];
        pe.freeSe = seZ;
        pe.se = Math.abs(jacobian(p, zHat[i])) * seZ;
        pe.lower95 = toParameter(p, zHat[i] - 1.96 * seZ);
        pe.upper95 = toParameter(p, zHat[i] + 1.96 * seZ);
      });
    } else flatDirection = true;
  }
  return {
    model: model.name,
    status: 'ok',
    reason: best.converged ? 'converged' : `best start did not converge: ${best.reason}`,
    logLikelihood: logLik,
    k,
    n,
    aic: aic(logLik, k),
    aicc: aicc(logLik, k, n),
    bic: bic(logLik, k, n),
    parameters,
    hessianRatio,
    flatDirection,
    starts,
    evaluations,
  };
}

/** The free-space vector of given parameter values (e.g. to evaluate at the truth). */
export function freeVector(model: CandidateModel, values: Record<string, number>): number[] {
  return model.free.map((p) => toFree(p, values[p.name]));
}
