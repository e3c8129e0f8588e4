/**
 * Hit-or-miss loss with window ε: 0 when |e| < ε, 1 otherwise. The Bayes action
 * is the centre of the window [c−ε, c+ε] holding most posterior mass; it tends
 * to the posterior mode as ε → 0 (Berger 1985, §4.4.2). The maximum is global,
 * so with a bimodal posterior the estimate can jump between modes.
 */
import { z } from 'zod';
import { brentMinimize, brentRoot } from '../../numerics/roots.js';
import type { GridPosterior } from '../gridPosterior.js';
import type { LossFunction, LossParameter } from './types.js';

export const hitOrMissSchema = z.strictObject({
  family: z.literal('hit-or-miss'),
  window: z.number().positive().describe('half-width ε of the window counted as a hit, > 0, in stimulus units'),
});

export const hitOrMissParameters: LossParameter[] = [
  { name: 'window', description: 'half-width ε of the hit window', min: 1e-3, max: 1e3, transform: 'log', typical: 1 },
];

/** Global maximiser of a function known at the posterior nodes, refined locally. */
export function maximiseOverNodes(post: GridPosterior, objective: (c: number) => number, candidates = 2): number {
  const xs = post.x;
  const vals: { j: number; v: number }[] = [];
  let best = -Infinity;
  let prev = -Infinity;
  let prevJ = -1;
  let rising = true;
  for (let j = post.first; j <= post.last; j++) {
    const v = objective(xs[j]);
    if (v > best) best = v;
    // local maxima of the node sequence
    if (prevJ >= 0) {
      if (v < prev && rising) vals.push({ j: prevJ, v: prev });
      rising = v >= prev;
    }
    prev = v;
    prevJ = j;
  }
  if (rising && prevJ >= 0) vals.push({ j: prevJ, v: prev });
  vals.sort((a, b) => b.v - a.v);
  let bestX = xs[vals[0].j];
  let bestV = -Infinity;
  for (let k = 0; k < Math.min(candidates, vals.length); k++) {
    if (k > 0 && vals[k].v < vals[0].v - 1e-3 * Math.abs(vals[0].v)) break;
    const j = vals[k].j;
    // At the first/last node, search out to the window's edge (a finite support end
    // for truncated posteriors): the optimum can lie between that end and the node.
    const a = j > post.first ? xs[j - 1] : post.warp.fromU(post.panelStart[post.firstPanel]);
    const b = j < post.last ? xs[j + 1] : post.warp.fromU(post.panelStart[post.lastPanel] + 2 * post.panelHalf[post.lastPanel]);
    const r = brentMinimize((c) => -objective(c), a, b, 1e-12);
    if (-r.value > bestV) {
      bestV = -r.value;
      bestX = r.x;
    }
  }
  return bestX;
}

/**
 * Polish a window centre with the stationarity condition f(c+ε) = f(c−ε) on
 * the exact posterior density, which is flat-free unlike the window mass itself.
 * When the posterior is much narrower than the window, every centre covering
 * it holds the same mass: the maximisers form a plateau and the optimiser's
 * landing point on it is arbitrary (it flipped between plateau points from one
 * measurement to the next, and the estimate curve chased those flips as
 * jumps). The stationarity root, the limit of a smooth window's optimum, is
 * unique on the plateau and moves continuously with the measurement, so the
 * bracket is widened across the plateau before solving.
 */
function polish(post: GridPosterior, c0: number, window: number): number {
  if (!post.exactAvailable) return c0;
  const g = (c: number) => post.exactLogDensity(c + window) - post.exactLogDensity(c - window);
  const held = (c: number) => post.massBetween(c - window, c + window);
  const top = held(c0);
  // First centre off the plateau on each side, by doubling steps (the plateau
  // can be wider than the posterior's node window, and is at most 2ε wide).
  const edge = (dir: number): number => {
    let c = c0;
    for (let step = window / 64; step <= 4 * window; step *= 2) {
      const t = c + dir * step;
      if (held(t) < top - PLATEAU_TOL) return t;
      c = t;
    }
    return c;
  };
  const [cMin, cMax] = centreRange(post, window);
  const lo = Math.max(edge(-1), cMin);
  const hi = Math.min(edge(1), cMax);
  if (!(hi > lo)) return c0;
  const { a, b, ga, gb } = finiteEnds(g, lo, hi);
  if (!(Number.isFinite(ga) && Number.isFinite(gb)) || ga * gb > 0) return c0;
  const c = brentRoot(g, a, b, 1e-14 * Math.max(1, Math.abs(c0)), 200, { fa: ga, fb: gb });
  // On a plateau the root holds the top mass too; elsewhere only keep a root that does.
  return held(c) >= top - PLATEAU_TOL ? c : c0;
}

/** Window masses this close to the best count as tied: the panel polynomials give window masses to about 1e-8 where a window edge sits in a far tail (measured: masses of 1 + 1.3e-8). */
const PLATEAU_TOL = 1e-7;

/**
 * Where a window centre can usefully sit: a centre closer to a support end than
 * ε only loses mass, so centres stay within [lower + ε, upper − ε].
 */
function centreRange(post: GridPosterior, window: number): [number, number] {
  const [sLo, sHi] = post.supportX;
  return [Number.isFinite(sLo) ? sLo + window : -Infinity, Number.isFinite(sHi) ? sHi - window : Infinity];
}

/**
 * g(c) = log f(c + ε) − log f(c − ε) at the ends of a bracket [a, b]. A window
 * edge exactly on a support end where the density vanishes (gamma, shape > 1)
 * gives g = ±∞ there: the sign is right but Brent's interpolation needs finite
 * values, so such an end steps a hair inside.
 */
function finiteEnds(g: (c: number) => number, a: number, b: number): { a: number; b: number; ga: number; gb: number } {
  let ga = g(a);
  let gb = g(b);
  if (ga === Infinity) ga = g((a += 1e-9 * (b - a)));
  if (gb === -Infinity) gb = g((b -= 1e-9 * (b - a)));
  return { a, b, ga, gb };
}

/**
 * A bracket of the root of the decreasing g around a guess inside (lo, hi):
 * steps of growing size from the guess, downhill in |g|, until g changes sign.
 * The estimate curve's prediction is usually close to the root, so Brent
 * starts from a bracket about a hundredth of the mode bracket's width
 * (measured on the bench's curve: 12 exact densities per estimate against
 * 17.6 from the mode bracket; first steps of 1e-3 or 1e-1 of the width did
 * slightly worse). The root is the same to Brent's tolerance. Null when the
 * steps reach lo or hi without a sign change (the caller then takes the mode
 * bracket, with its support-end cases).
 */
function bracketNear(g: (c: number) => number, c: number, lo: number, hi: number): { a: number; b: number; ga: number; gb: number } | null {
  let gc = g(c);
  if (!Number.isFinite(gc)) return null;
  if (gc === 0) return { a: c, b: c, ga: 0, gb: 0 };
  let step = 1e-2 * (hi - lo);
  for (;;) {
    const t = gc > 0 ? c + step : c - step;
    if (!(t > lo && t < hi)) return null;
    const gt = g(t);
    if (!Number.isFinite(gt)) return null;
    if (gc > 0 ? gt <= 0 : gt >= 0) return gc > 0 ? { a: c, b: t, ga: gc, gb: gt } : { a: t, b: c, ga: gt, gb: gc };
    c = t;
    gc = gt;
    step *= 8;
  }
}

export function hitOrMissLoss(window: number): LossFunction {
  /**
   * Unimodal posterior: the optimal centre c solves f(c−ε) = f(c+ε) and lies
   * within ε of the mode (node j, whose neighbours jl and jr bound the bracket),
   * so bracket there and skip the scan. NaN when the bracket checks fail (the
   * caller then scans).
   */
  const unimodalCentre = (post: GridPosterior, j: number, jl: number, jr: number, hint: number): number => {
    // The centre stays within the support less ε, and sits at that end when
    // the posterior is still falling there (the mode is at or near the end).
    const [cMin, cMax] = centreRange(post, window);
    const g = (c: number) => post.exactLogDensity(c + window) - post.exactLogDensity(c - window);
    const lo = Math.max(cMin, post.x[jl] - window);
    const hi = Math.min(cMax, post.x[jr] + window);
    const tol = 1e-14 * Math.max(1, Math.abs(post.x[j]));
    const near = hint > lo && hint < hi ? bracketNear(g, hint, lo, hi) : null;
    if (near) return brentRoot(g, near.a, near.b, tol, 200, { fa: near.ga, fb: near.gb });
    const { a, b, ga, gb } = finiteEnds(g, lo, hi);
    if (a === cMin && ga <= 0) return cMin;
    if (b === cMax && gb >= 0) return cMax;
    if (Number.isFinite(ga) && Number.isFinite(gb) && ga > 0 && gb < 0) return brentRoot(g, a, b, tol, 200, { fa: ga, fb: gb });
    return NaN;
  };
  const estimate = (post: GridPosterior, hint: number): number => {
    if (post.unimodal && post.exactAvailable) {
      // The mode of the density in x: with a log warp it differs from that in u.
      const j = post.modeNodeX();
      const c = unimodalCentre(post, j, Math.max(post.first, j - 1), Math.min(post.last, j + 1), hint);
      if (c === c) return c;
    }
    return polish(post, maximiseOverNodes(post, (c) => post.massBetween(c - window, c + window), 3), window);
  };
  return {
    family: 'hit-or-miss',
    params: { window },
    loss: (e) => (Math.abs(e) < window ? 0 : 1),
    estimate,
    // On a unimodal posterior the bracketed root reads only the exact density near the mode:
    // the normalised posterior is left to whichever method needs it (usually none).
    // From a hint (the curve's prediction, within ε of the mode) the mode node is
    // found by climbing from it, without evaluating the window at all.
    estimateAt: (post, m, hint) => {
      if (post.unimodal && hint === hint) {
        const j = post.climbToModeNode(m, hint);
        const c = j >= 0 ? unimodalCentre(post, j, j - 1, j + 1, hint) : NaN;
        if (c === c) return c;
      }
      if (post.unimodal) post.setMeasurementDeferred(m);
      else post.setMeasurement(m);
      return estimate(post, hint);
    },
    mayJump: true,
    symmetric: true,
  };
}

export const hitOrMissFamily = {
  name: 'hit-or-miss' as const,
  summary: 'all-or-none loss with a hit window ε; estimate → posterior mode as ε → 0',
  schema: hitOrMissSchema,
  parameters: hitOrMissParameters,
  create: (s: { window: number }): LossFunction => hitOrMissLoss(s.window),
};
