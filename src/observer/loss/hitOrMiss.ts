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
 */
function polish(post: GridPosterior, c0: number, window: number): number {
  if (!post.exactAvailable) return c0;
  const g = (c: number) => post.exactLogDensity(c + window) - post.exactLogDensity(c - window);
  const j = Math.max(post.first, Math.min(post.last, nearestNode(post, c0)));
  const a = post.x[Math.max(post.first, j - 2)];
  const b = post.x[Math.min(post.last, j + 2)];
  const ga = g(a);
  const gb = g(b);
  if (!(Number.isFinite(ga) && Number.isFinite(gb)) || ga * gb > 0) return c0;
  return brentRoot(g, a, b, 1e-14 * Math.max(1, Math.abs(c0)));
}

function nearestNode(post: GridPosterior, c: number): number {
  let best = post.first;
  for (let j = post.first; j <= post.last; j++) if (Math.abs(post.x[j] - c) < Math.abs(post.x[best] - c)) best = j;
  return best;
}

export function hitOrMissLoss(window: number): LossFunction {
  return {
    family: 'hit-or-miss',
    params: { window },
    loss: (e) => (Math.abs(e) < window ? 0 : 1),
    estimate: (post) => {
      if (post.logConcave && post.exactAvailable) {
        // Unimodal posterior: the optimal centre c solves f(c−ε) = f(c+ε) and lies
        // within ε of the mode, so bracket there and skip the scan.
        const j = post.peakNode();
        // A window cannot usefully stick out of the support: its centre stays
        // within [lower + ε, upper − ε], and sits at that end when the posterior
        // is still falling there (the mode is at or near the end).
        const [sLo, sHi] = post.supportX;
        const cMin = Number.isFinite(sLo) ? sLo + window : -Infinity;
        const cMax = Number.isFinite(sHi) ? sHi - window : Infinity;
        let a = Math.max(cMin, post.x[Math.max(post.first, j - 1)] - window);
        let b = Math.min(cMax, post.x[Math.min(post.last, j + 1)] + window);
        const g = (c: number) => post.exactLogDensity(c + window) - post.exactLogDensity(c - window);
        let ga = g(a);
        let gb = g(b);
        // A window edge exactly on a support end where the density vanishes
        // (gamma, shape > 1) gives g = ±∞ there: the sign is right but Brent's
        // interpolation needs finite values, so step a hair inside.
        if (a === cMin && ga === Infinity) ga = g((a += 1e-9 * (b - a)));
        if (b === cMax && gb === -Infinity) gb = g((b -= 1e-9 * (b - a)));
        if (a === cMin && ga <= 0) return cMin;
        if (b === cMax && gb >= 0) return cMax;
        if (Number.isFinite(ga) && Number.isFinite(gb) && ga > 0 && gb < 0) return brentRoot(g, a, b, 1e-14 * Math.max(1, Math.abs(post.x[j])));
      }
      return polish(post, maximiseOverNodes(post, (c) => post.massBetween(c - window, c + window), 3), window);
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
