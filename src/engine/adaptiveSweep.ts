/**
 * The trial-count sweep with adaptive effort. Round 0 runs the initial
 * observers at every (generating model, trial count) point; after each round
 * a point whose 95% anytime-valid interval (analysis/
 * confidenceSequence.ts) still contains the target gets one more batch of
 * observers, up to the cap. Observers are indexed: a point with N observers
 * uses observers 0..N−1, each a fixed function of the seed and its index, and
 * its datasets at different counts are nested prefixes of one sequence. The
 * decisions depend only on finished job lines, so the sweep is the same
 * whatever the worker count, and a resumed sweep replays the same rounds.
 */
import type { JobLine } from '../analysis/types.js';
import { confidenceSequence } from '../analysis/confidenceSequence.js';
import { modelSuccess, parameterSuccess, type ParameterTarget } from '../analysis/sizingSuccess.js';
import type { SizingRule } from '../analysis/sizing.js';
import { jobKey, type JobSpec } from './plan.js';
import { runStudy } from './runStudy.js';
import type { ResolvedStudy } from './resolve.js';

export interface SweepOptions {
  folder: string;
  workers?: number;
  quiet?: boolean;
  initial: number;
  batch: number;
  max: number;
  target: number;
  alpha: number;
  parameter?: ParameterTarget;
  onRound?: (round: number, jobs: number) => void;
}

export interface SweepOutcome {
  /** Lines of the observers the rule decided on (extra lines in the folder are left out). */
  lines: JobLine[];
  rule: SizingRule;
  interrupted: boolean;
  ran: number;
  failed: number;
}

export async function adaptiveSweep(study: ResolvedStudy, o: SweepOptions): Promise<SweepOutcome> {
  const counts = study.trialCounts;
  const points = study.generating.flatMap((g) => counts.map((t) => ({ g, t })));
  const pointAlpha = o.alpha / Math.max(1, points.length);
  const observers = new Map(points.map((p) => [`${p.g}|${p.t}`, 0]));
  const criterion = study.scenario.fitting.criterion;
  const models = study.candidates.map((c) => c.name);
  const judges = [modelSuccess(models, { criterion, margin: study.scenario.fitting.margin }), ...(o.parameter ? [parameterSuccess(o.parameter)] : [])];
  let lines: JobLine[] = [];
  let ran = 0;
  let failed = 0;
  let round = 0;
  let jobs: JobSpec[] = points.flatMap(({ g, t }) => range(0, o.initial).map((obs) => ({ key: jobKey(g, obs, t), generating: g, observer: obs, trials: t })));
  for (const p of points) observers.set(`${p.g}|${p.t}`, o.initial);
  for (;;) {
    o.onRound?.(round, jobs.length);
    const out = await runStudy(study, { folder: o.folder, workers: o.workers, quiet: o.quiet, jobs });
    ran += out.ran;
    failed += out.failed;
    lines = out.lines.filter((l) => l.observer < (observers.get(`${l.generating}|${l.trials}`) ?? 0));
    if (out.interrupted) return { lines, rule: rule(), interrupted: true, ran, failed };
    jobs = [];
    for (const { g, t } of points) {
      const n = observers.get(`${g}|${t}`)!;
      if (n >= o.max) continue;
      const mine = lines.filter((l) => l.generating === g && l.trials === t);
      const uncertain = judges.some((judge) => undecided(mine, judge, o.target, o.alpha));
      if (!uncertain) continue;
      const next = Math.min(o.max, n + o.batch);
      observers.set(`${g}|${t}`, next);
      for (const obs of range(n, next)) jobs.push({ key: jobKey(g, obs, t), generating: g, observer: obs, trials: t });
    }
    if (!jobs.length) break;
    round++;
  }
  return { lines, rule: rule(), interrupted: false, ran, failed };

  function rule(): SizingRule {
    return {
      name: 'anytime-valid confidence sequence (Robbins mixture, beta-binomial), more observers where the interval still contains the target',
      reference: 'Robbins (1970) Ann. Math. Stat. 41; Howard, Ramdas, McAuliffe & Sekhon (2021) Annals of Statistics 49',
      alpha: o.alpha,
      pointAlpha,
      mixture: 'uniform Beta(1, 1)',
      initialObservers: o.initial,
      batch: o.batch,
      maxObservers: o.max,
      rounds: round + 1,
      decision: `after each round, a point whose ${Math.round(100 * (1 - o.alpha))}% anytime-valid interval still contains the target ${o.target} gets ${o.batch} more observers, up to ${o.max}`,
    };
  }
}

/**
 * Is it still open whether this point reaches the target? True when its
 * anytime-valid interval (at level alpha) contains the target; a point with no
 * judged datasets is not undecided (nothing more can be learnt from it).
 */
export function undecided(lines: readonly JobLine[], judge: (l: JobLine) => boolean | null, target: number, alpha: number): boolean {
  let k = 0;
  let s = 0;
  for (const l of lines) {
    const v = judge(l);
    if (v === null) continue;
    k++;
    if (v) s++;
  }
  if (k === 0) return false;
  const cs = confidenceSequence(s, k, alpha);
  return cs.lower < target && cs.upper >= target;
}

const range = (a: number, b: number) => Array.from({ length: Math.max(0, b - a) }, (_, i) => a + i);
