/**
 * The job plan: one job per (generating model, observer, trial count), keyed
 * by strings like "gen=power/obs=0017/trials=240". Keys sort as tuples with
 * numbers compared as numbers, the same way everywhere (plan, store, analysis).
 */
import type { ResolvedStudy } from './resolve.js';

export interface JobSpec {
  key: string;
  generating: string;
  observer: number;
  trials: number;
}

export function jobKey(generating: string, observer: number, trials: number): string {
  return `gen=${generating}/obs=${String(observer).padStart(4, '0')}/trials=${trials}`;
}

export function parseJobKey(key: string): JobSpec {
  const m = /^gen=(.+)\/obs=(\d+)\/trials=(\d+)$/.exec(key);
  if (!m) throw new Error(`malformed job key '${key}'`);
  return { key, generating: m[1], observer: Number(m[2]), trials: Number(m[3]) };
}

/** Tuple order with numbers compared as numbers: the one ordering used everywhere. */
export { compareJobKeys as compareKeys } from '../analysis/jobKeys.js';
import { compareJobKeys } from '../analysis/jobKeys.js';

export function planJobs(study: ResolvedStudy): JobSpec[] {
  const jobs: JobSpec[] = [];
  for (const g of study.generating)
    for (let o = 0; o < study.scenario.generate.observers; o++)
      for (const t of study.trialCounts) jobs.push({ key: jobKey(g, o, t), generating: g, observer: o, trials: t });
  return jobs.sort((a, b) => compareJobKeys(a.key, b.key));
}
