/**
 * Seeded simulation of responses. The estimate is computed at the sampled
 * measurement itself (never interpolated), so tests that compare simulated
 * responses with the computed density check the interpolation too.
 * Each trial consumes a fixed number of draws (lapse, measurement, motor,
 * lapse response), so the stream stays aligned whatever happens on a trial.
 */
import { drawStandardNormal, type RandomStream } from '../numerics/rng.js';
import { closedFormEstimate, evaluateClosedForm } from './closedForm.js';
import { buildPosteriorGrid, measurementRange } from './gridFactory.js';
import { estimateAt, motorReach } from './estimateCurve.js';
import type { GridPosterior } from './gridPosterior.js';
import type { Dataset, Observer } from './observer.js';

export function simulateResponses(obs: Observer, stimulus: Float64Array, condition: Int32Array, rand: RandomStream): Dataset {
  const n = stimulus.length;
  const response = new Float64Array(n);
  let lo = Infinity;
  let hi = -Infinity;
  for (let t = 0; t < n; t++) {
    lo = Math.min(lo, stimulus[t]);
    hi = Math.max(hi, stimulus[t]);
  }
  const grids: (GridPosterior | null)[] = obs.noise.map((noise) =>
    closedFormEstimate(obs, noise) ? null : buildPosteriorGrid(obs.prior, noise, measurementRange(noise, lo, hi), motorReach(obs)).grid,
  );
  const closed = obs.noise.map((noise) => closedFormEstimate(obs, noise));
  const { scale } = obs;
  for (let t = 0; t < n; t++) {
    const c = condition[t];
    const noise = obs.noise[c];
    const uLapse = rand();
    const m = noise.sample(stimulus[t], rand);
    const z = drawStandardNormal(rand);
    const uLapseResponse = rand();
    let r: number;
    if (uLapse < obs.lapseRate) r = scale.lower + uLapseResponse * (scale.upper - scale.lower);
    else {
      const cf = closed[c];
      const est = cf ? evaluateClosedForm(cf, m) : estimateAt(obs, grids[c]!, m, NaN);
      r = est + obs.motorSd * z;
    }
    if (scale.ends === 'censor') r = Math.min(scale.upper, Math.max(scale.lower, r));
    response[t] = r;
  }
  return { stimulus: Float64Array.from(stimulus), condition: Int32Array.from(condition), response };
}
