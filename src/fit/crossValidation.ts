/**
 * k-fold cross-validated log-likelihood: fit on k−1 folds, score the held-out
 * fold at the fitted parameters, sum over folds. Folds are balanced within
 * each condition and assigned from a content seed, so they are reproducible.
 */
import { streamFromKey } from '../numerics/rng.js';
import { logLikelihood } from '../observer/responseDensity.js';
import type { Dataset } from '../observer/observer.js';
import { observerFor, type CandidateModel } from './candidate.js';
import { datasetDigest } from './contentSeed.js';
import { fitModel, type FitOptions } from './fitModel.js';

function subset(data: Dataset, keep: (t: number) => boolean): Dataset {
  const idx: number[] = [];
  for (let t = 0; t < data.stimulus.length; t++) if (keep(t)) idx.push(t);
  return {
    stimulus: Float64Array.from(idx, (t) => data.stimulus[t]),
    condition: Int32Array.from(idx, (t) => data.condition[t]),
    response: Float64Array.from(idx, (t) => data.response[t]),
  };
}

export function foldAssignment(data: Dataset, folds: number): Int32Array {
  const n = data.stimulus.length;
  const fold = new Int32Array(n);
  const rand = streamFromKey(`folds/${folds}/${datasetDigest(data)}`);
  const byCondition = new Map<number, number[]>();
  for (let t = 0; t < n; t++) {
    const c = data.condition[t];
    if (!byCondition.has(c)) byCondition.set(c, []);
    byCondition.get(c)!.push(t);
  }
  for (const trials of [...byCondition.entries()].sort((a, b) => a[0] - b[0]).map((e) => e[1])) {
    // Fisher–Yates shuffle, then deal the trials round-robin into folds.
    for (let i = trials.length - 1; i > 0; i--) {
      const j = Math.floor(rand() * (i + 1));
      [trials[i], trials[j]] = [trials[j], trials[i]];
    }
    trials.forEach((t, i) => (fold[t] = i % folds));
  }
  return fold;
}

export function crossValidatedLogLik(model: CandidateModel, data: Dataset, folds = 5, options: FitOptions = {}): number {
  const fold = foldAssignment(data, folds);
  let total = 0;
  for (let k = 0; k < folds; k++) {
    const train = subset(data, (t) => fold[t] !== k);
    const test = subset(data, (t) => fold[t] === k);
    const fit = fitModel(model, train, { ...options, skipUncertainty: true, seedSalt: `fold${k}` });
    if (fit.status !== 'ok') return -Infinity;
    total += logLikelihood(observerFor(model, fit.parameters.map((p) => p.value)), test);
  }
  return total;
}
