/**
 * Expectations over one trial of a design under a generating observer, by
 * quadrature instead of simulation: E f(x, r) = Σ_x w_x Σ_r w_r p_i(r | x) f(x, r).
 *
 * Stimuli: each condition gets its share of trials (equal, or as the
 * scenario's split says: the engine's condition-balanced blocks); within a condition, midpoint quantiles of the
 * stimulus distribution (x_k = Q((k + ½)/K), weight 1/K), or the listed values
 * of an explicit trial list weighted by how often they are listed.
 *
 * Responses: the trapezoid rule on the union of a coarse uniform grid over the
 * whole scale (where only lapses reach) and a fine grid (2/3 of a motor sd)
 * over the response core, the central 1 − 2·10⁻⁸ of the non-lapse response
 * distribution, found by bisection on its cdf. Every response density is a
 * Gaussian motor kernel convolved with something, and the trapezoid rule on a
 * step of ⅔ σ integrates such smooth, decaying integrands to near machine
 * precision (Trefethen & Weideman 2014, SIAM Review 56, "The exponentially
 * convergent trapezoidal rule"). A censored scale adds its two end masses as
 * points of weight 1. The weights of each stimulus are renormalised to sum to
 * one, so the grid is an exact probability distribution in its own right.
 */
import type { Observer } from '../observer/observer.js';
import { ConditionResponse } from '../observer/responseDensity.js';
import type { Distribution } from '../observer/distributions/types.js';

export interface StimulusNode {
  condition: number;
  x: number;
  /** Share of all trials this node stands for (sums to 1 over the design). */
  weight: number;
}

/** Flat arrays over (stimulus, response) cells. */
export interface ExpectationGrid {
  condition: Int32Array;
  stimulus: Float64Array;
  response: Float64Array;
  /** Probability of the cell under the generating observer (sums to 1). */
  weight: Float64Array;
  /** log p_i(r | x): density in the interior, mass at a censored end. */
  logDensity: Float64Array;
  /** Index of the cell's stimulus node. */
  node: Int32Array;
}

const TINY = 1e-300;
const COARSE = 48;
const FINE_STEP = 2 / 3;
const MAX_FINE = 160;
const CORE_TAIL = 1e-8;

/**
 * The design's stimuli: midpoint quantiles per condition, or the trial list's
 * values. `shares` gives each condition's share of trials (default equal).
 */
export function stimulusNodes(
  stimulus: Distribution,
  conditions: number,
  perCondition = 16,
  trialList?: { stimulus: number[]; condition: number[] },
  shares: readonly number[] = new Array<number>(conditions).fill(1 / conditions),
): StimulusNode[] {
  const nodes: StimulusNode[] = [];
  for (let c = 0; c < conditions; c++) {
    if (trialList) {
      const counts = new Map<number, number>();
      let total = 0;
      trialList.stimulus.forEach((x, i) => {
        if (trialList.condition[i] !== c) return;
        counts.set(x, (counts.get(x) ?? 0) + 1);
        total++;
      });
      if (counts.size <= 2 * perCondition) {
        for (const [x, k] of [...counts.entries()].sort((a, b) => a[0] - b[0])) nodes.push({ condition: c, x, weight: (k / total) * shares[c] });
      } else {
        // Many distinct values: midpoint quantiles of the listed values keep the cost fixed.
        const sorted = trialList.stimulus.filter((_, i) => trialList.condition[i] === c).sort((a, b) => a - b);
        for (let k = 0; k < perCondition; k++) nodes.push({ condition: c, x: sorted[Math.min(sorted.length - 1, Math.floor(((k + 0.5) / perCondition) * sorted.length))], weight: shares[c] / perCondition });
      }
    } else {
      for (let k = 0; k < perCondition; k++) nodes.push({ condition: c, x: stimulus.quantile((k + 0.5) / perCondition), weight: shares[c] / perCondition });
    }
  }
  return nodes;
}

/** Per-condition response models covering the given stimulus nodes. */
export function conditionResponses(obs: Observer, nodes: readonly StimulusNode[]): (ConditionResponse | null)[] {
  return obs.noise.map((noise, c) => {
    const xs = nodes.filter((n) => n.condition === c).map((n) => n.x);
    return xs.length ? new ConditionResponse(obs, noise, Math.min(...xs), Math.max(...xs)) : null;
  });
}

/** Smallest and largest response of the non-lapse part, at tail probability CORE_TAIL each. */
function responseCore(obs: Observer, model: ConditionResponse, x: number): [number, number] {
  const { lower, upper, ends } = obs.scale;
  const range = upper - lower;
  const lam = obs.lapseRate;
  const lapseCdf = (r: number) => (r <= lower ? 0 : r >= upper ? 1 : (r - lower) / range);
  const coreCdf = (r: number) => (model.cdf(x, r) - lam * lapseCdf(r)) / (1 - lam);
  const span = ends === 'censor' ? [lower, upper] : [lower - 10 * obs.motorSd - range, upper + 10 * obs.motorSd + range];
  const solve = (p: number): number => {
    let [a, b] = span;
    for (let it = 0; it < 50; it++) {
      const mid = 0.5 * (a + b);
      if (coreCdf(mid) < p) a = mid;
      else b = mid;
    }
    return 0.5 * (a + b);
  };
  return [solve(CORE_TAIL), solve(1 - CORE_TAIL)];
}

export function expectationGrid(obs: Observer, nodes: readonly StimulusNode[]): ExpectationGrid {
  const models = conditionResponses(obs, nodes);
  const { lower, upper, ends } = obs.scale;
  const range = upper - lower;
  // Interior points stay a hair inside the ends, where likelihood() returns a density.
  const inset = 1e-6 * range;
  const cells: { c: number; x: number; r: number; w: number; lp: number; node: number }[] = [];
  nodes.forEach((n, k) => {
    const model = models[n.condition]!;
    const [a, b] = responseCore(obs, model, n.x);
    const lo = ends === 'censor' ? lower + inset : Math.min(lower, a);
    const hi = ends === 'censor' ? upper - inset : Math.max(upper, b);
    const pts = new Set<number>();
    const fa = Math.max(lo, a);
    const fb = Math.min(hi, b);
    // Coarse points only outside the core: inside it the grid stays uniform, which the trapezoid rule's accuracy needs.
    for (let i = 0; i <= COARSE; i++) {
      const r = lo + ((hi - lo) * i) / COARSE;
      if (!(r > fa && r < fb)) pts.add(r);
    }
    if (fb > fa) {
      const steps = Math.min(MAX_FINE, Math.max(8, Math.ceil((fb - fa) / (FINE_STEP * obs.motorSd))));
      for (let i = 0; i <= steps; i++) pts.add(fa + ((fb - fa) * i) / steps);
    }
    const rs = [...pts].sort((p, q) => p - q);
    const local: { r: number; w: number; p: number }[] = [];
    rs.forEach((r, i) => {
      const left = i > 0 ? r - rs[i - 1] : 0;
      const right = i < rs.length - 1 ? rs[i + 1] - r : 0;
      local.push({ r, w: 0.5 * (left + right), p: model.likelihood(n.x, r) });
    });
    if (ends === 'censor') {
      local.push({ r: lower, w: 1, p: model.likelihood(n.x, lower) });
      local.push({ r: upper, w: 1, p: model.likelihood(n.x, upper) });
    }
    const total = local.reduce((s, q) => s + q.w * q.p, 0);
    for (const q of local) {
      const w = (n.weight * q.w * q.p) / total;
      if (w > 0) cells.push({ c: n.condition, x: n.x, r: q.r, w, lp: Math.log(Math.max(q.p, TINY)), node: k });
    }
  });
  return {
    condition: Int32Array.from(cells.map((q) => q.c)),
    stimulus: Float64Array.from(cells.map((q) => q.x)),
    response: Float64Array.from(cells.map((q) => q.r)),
    weight: Float64Array.from(cells.map((q) => q.w)),
    logDensity: Float64Array.from(cells.map((q) => q.lp)),
    node: Int32Array.from(cells.map((q) => q.node)),
  };
}

/** log p(r | x) of another observer at every cell of the grid (floored like the likelihood). */
export function logDensityOn(obs: Observer, grid: ExpectationGrid, nodes: readonly StimulusNode[]): Float64Array {
  const models = conditionResponses(obs, nodes);
  const out = new Float64Array(grid.weight.length);
  for (let i = 0; i < out.length; i++) {
    const p = models[grid.condition[i]]!.likelihood(grid.stimulus[i], grid.response[i]);
    out[i] = Math.log(p > TINY ? p : TINY);
  }
  return out;
}
