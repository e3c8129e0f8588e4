/**
 * One job, start to finish: draw the synthetic observer, take the prefix of
 * its trial sequence, fit every candidate, compare. A pure function of the
 * resolved study and the job key, so any process anywhere gives the same line.
 */
import { fitModel, type FitResult } from '../fit/fitModel.js';
import { compareFits } from '../fit/compare.js';
import { crossValidatedLogLik } from '../fit/crossValidation.js';
import { toFree } from '../fit/transforms.js';
import type { ComparisonLine, FitLine, JobLine } from '../analysis/types.js';
import type { Dataset } from '../observer/observer.js';
import { parseJobKey } from './plan.js';
import { prefix, syntheticDataset } from './syntheticObserver.js';
import type { ResolvedStudy } from './resolve.js';

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);

function fitLine(f: FitResult, cv?: number): FitLine {
  return {
    model: f.model,
    status: f.status,
    reason: f.reason,
    logLikelihood: finite(f.logLikelihood),
    k: f.k,
    aic: finite(f.aic),
    aicc: finite(f.aicc),
    bic: finite(f.bic),
    ...(cv !== undefined ? { cvLogLikelihood: finite(cv) } : {}),
    parameters: f.parameters.map((p) => ({
      name: p.name,
      value: p.value,
      se: finite(p.se) as number,
      lower95: finite(p.lower95) as number,
      upper95: finite(p.upper95) as number,
      free: p.free,
      freeSe: finite(p.freeSe) as number,
      atBound: p.atBound,
    })),
    flatDirection: f.flatDirection,
    evaluations: f.evaluations,
  };
}

export interface DatasetFits {
  fits: FitLine[];
  comparison: ComparisonLine;
}

/**
 * Every candidate fitted to one dataset and compared under the scenario's
 * criterion: the part of a job shared by `run` (synthetic datasets) and `fit`
 * (participants' data), so both paths give the same numbers for the same data.
 * `withCrossValidation` adds the cross-validated log-likelihood even when the
 * criterion does not need it (e.g. as log-evidence for group selection).
 */
export function fitDataset(study: ResolvedStudy, data: Dataset, withCrossValidation = false): DatasetFits {
  const fitting = study.scenario.fitting;
  const options = { starts: fitting.starts, evaluationsPerStart: fitting.evaluationsPerStart };
  const fits = study.candidates.map((m) => fitModel(m, data, options));
  let cv: Record<string, number> | undefined;
  if (fitting.criterion === 'cv' || withCrossValidation) {
    cv = {};
    for (const m of study.candidates) cv[m.name] = crossValidatedLogLik(m, data, fitting.folds, options);
  }
  const cmp = compareFits(fits, fitting.criterion, fitting.margin, cv);
  const delta: Record<string, number | null> = {};
  for (const [k, v] of Object.entries(cmp.delta)) delta[k] = finite(v);
  return {
    fits: fits.map((f) => fitLine(f, cv?.[f.model])),
    comparison: { criterion: cmp.criterion, status: cmp.status, winner: cmp.winner, contenders: cmp.contenders, delta, weight: cmp.weight },
  };
}

export function runJob(study: ResolvedStudy, key: string): JobLine {
  const spec = parseJobKey(key);
  const { truth, full } = syntheticDataset(study, spec.generating, spec.observer);
  const data = prefix(full, spec.trials);
  const { fits, comparison } = fitDataset(study, data);
  const gen = study.candidates.find((c) => c.name === spec.generating)!;
  const truthFree: Record<string, number> = {};
  for (const p of gen.free) truthFree[p.name] = toFree(p, truth[p.name]);
  return {
    key,
    generating: spec.generating,
    observer: spec.observer,
    trials: spec.trials,
    truth,
    truthFree,
    status: 'ok',
    attempts: 1,
    fits,
    comparison,
  };
}
