/**
 * The rounds of the adaptive trial-count sweep (`size`), as pure functions of
 * the sweep's settings and the job lines finished so far. Round 1 gives every
 * (design, generating model, trial count) point its initial observers; after
 * a round, a point whose anytime-valid interval (analysis/
 * confidenceSequence.ts) still contains the target gets one more batch of
 * observers, up to the cap. Each round is therefore a FIXED plan of job keys,
 * known before any of its jobs runs, which is what lets a cluster run a round
 * as an ordinary sharded array job (engine/shard.ts) and merge it.
 *
 * `replayRounds` is the one place the rule is applied: the single-machine
 * sweep (engine/adaptiveSweep.ts) and the merge of a cluster round both call
 * it on the lines they have, so both take the same decisions by construction.
 * Observer k of a point is a fixed function of (seed, model, k), so the lines,
 * and with them every decision, do not depend on where or when jobs ran.
 */
import { createHash } from 'node:crypto';
import { z } from 'zod';
import type { JobLine } from '../analysis/types.js';
import { compareJobKeys } from '../analysis/jobKeys.js';
import { confidenceSequence } from '../analysis/confidenceSequence.js';
import { modelSuccess, parameterSuccess, type Success } from '../analysis/sizingSuccess.js';
import type { SizingRule } from '../analysis/sizing.js';
import { jobKey, parseJobKey, type JobSpec } from './plan.js';
import type { ResolvedStudy } from './resolve.js';

/** Everything beyond the scenario that decides a sweep's jobs and decisions (the flags of `size`). */
export const sweepSettingsSchema = z
  .object({
    trials: z.array(z.number().int().min(10)).min(2),
    initial: z.number().int().min(1),
    batch: z.number().int().min(1),
    max: z.number().int().min(1),
    target: z.number().gt(0).lt(1),
    alpha: z.number().gt(0).lt(1),
    /** The --seed override, or null for each design's own scenario seed. */
    seed: z.number().int().min(0).nullable(),
    parameter: z.object({ name: z.string().min(1), exclude: z.number().optional(), width: z.number().positive().optional() }).strict().nullable(),
  })
  .strict();

export type SweepSettings = z.infer<typeof sweepSettingsSchema>;

/** One design of the sweep: the base scenario or a variant, resolved with observers = the cap. */
export interface SweepDesign {
  variant: string;
  study: ResolvedStudy;
}

/** Observers [from, to) of one point added in one round. */
export interface RoundPoint {
  design: string;
  generating: string;
  trials: number;
  from: number;
  to: number;
}

export interface RoundPlan {
  /** 1-based. */
  round: number;
  points: RoundPoint[];
}

/** A job of a round: the design it belongs to, its job in that design's study, and its key within the round's plan. */
export interface RoundJob {
  design: string;
  spec: JobSpec;
  /** `design=<variant>/gen=…/obs=…/trials=…`: unique across designs, sorted by the one key order. */
  key: string;
}

/** The identity of a sweep: every design's scenario hash and the settings. Shards, plans and merged folders carry it. */
export function sweepHash(designs: readonly SweepDesign[], settings: SweepSettings): string {
  const identity = { settings: sweepSettingsSchema.parse(settings), designs: designs.map((d) => [d.variant, d.study.hash]) };
  return createHash('sha256').update(JSON.stringify(identity)).digest('hex');
}

export function roundKey(design: string, key: string): string {
  return `design=${design}/${key}`;
}

/** The design and the design's own job key of a round key. */
export function splitRoundKey(key: string): { design: string; key: string } {
  const m = /^design=([^/]+)\/(.+)$/.exec(key);
  if (!m) throw new Error(`malformed round key '${key}'`);
  return { design: m[1], key: m[2] };
}

/** The jobs of a round, in key order. */
export function roundJobs(plan: RoundPlan): RoundJob[] {
  const jobs: RoundJob[] = [];
  for (const p of plan.points)
    for (let obs = p.from; obs < p.to; obs++) {
      const key = jobKey(p.generating, obs, p.trials);
      jobs.push({ design: p.design, spec: parseJobKey(key), key: roundKey(p.design, key) });
    }
  return jobs.sort((a, b) => compareJobKeys(a.key, b.key));
}

const pointId = (design: string, generating: string, trials: number) => `${design}|${generating}|${trials}`;

/** Round 1: the initial observers at every point of every design. */
export function firstRound(designs: readonly SweepDesign[], s: SweepSettings): RoundPlan {
  return {
    round: 1,
    points: designs.flatMap((d) => d.study.generating.flatMap((g) => d.study.trialCounts.map((t) => ({ design: d.variant, generating: g, trials: t, from: 0, to: Math.min(s.initial, s.max) })))),
  };
}

export interface Replay {
  /** Rounds whose every job has a line, in order. */
  done: RoundPlan[];
  /** The round to run next (some or all of its jobs lack lines), or null when the sweep is finished. */
  next: RoundPlan | null;
  /** Per design: the lines the rule decided on, in key order (lines of jobs outside the finished rounds are left out). */
  lines: Map<string, JobLine[]>;
  /** Per design: how many rounds gave it jobs. */
  rounds: Map<string, number>;
  /** After the finished rounds: points at the cap whose interval still contains the target (the rule can add no more). */
  capped: Omit<RoundPoint, 'from' | 'to'>[];
}

/**
 * Apply the rule to the lines found so far: replay round after round while
 * every job of the round has a line, deciding each next round from the lines
 * alone. `linesOf(design)` gives every line a design's folder holds.
 */
export function replayRounds(designs: readonly SweepDesign[], s: SweepSettings, linesOf: (design: string) => readonly JobLine[]): Replay {
  const byKey = new Map<string, JobLine>();
  for (const d of designs) for (const l of linesOf(d.variant)) byKey.set(roundKey(d.variant, l.key), l);
  const judges = new Map(designs.map((d) => [d.variant, judgesOf(d.study, s)]));
  const observers = new Map<string, number>();
  const done: RoundPlan[] = [];
  let capped: Replay['capped'] = [];
  let plan = firstRound(designs, s);
  while (plan.points.length) {
    if (roundJobs(plan).some((j) => !byKey.has(j.key))) return finish(plan);
    done.push(plan);
    for (const p of plan.points) observers.set(pointId(p.design, p.generating, p.trials), p.to);
    const points: RoundPoint[] = [];
    capped = [];
    for (const d of designs)
      for (const g of d.study.generating)
        for (const t of d.study.trialCounts) {
          const n = observers.get(pointId(d.variant, g, t)) ?? 0;
          const mine = Array.from({ length: n }, (_, obs) => byKey.get(roundKey(d.variant, jobKey(g, obs, t)))!);
          if (!judges.get(d.variant)!.some((judge) => undecided(mine, judge, s.target, s.alpha))) continue;
          if (n >= s.max) capped.push({ design: d.variant, generating: g, trials: t });
          else points.push({ design: d.variant, generating: g, trials: t, from: n, to: Math.min(s.max, n + s.batch) });
        }
    plan = { round: plan.round + 1, points };
  }
  return finish(null);

  function finish(next: RoundPlan | null): Replay {
    const lines = new Map<string, JobLine[]>(designs.map((d) => [d.variant, []]));
    for (const r of done) for (const j of roundJobs(r)) lines.get(j.design)!.push(byKey.get(j.key)!);
    for (const [d, l] of lines) lines.set(d, l.sort((a, b) => compareJobKeys(a.key, b.key)));
    const rounds = new Map(designs.map((d) => [d.variant, done.filter((r) => r.points.some((p) => p.design === d.variant)).length]));
    return { done, next, lines, rounds, capped };
  }
}

/** What counts as a success at a point: the generating model chosen, and, with a parameter target, the parameter pinned down. */
function judgesOf(study: ResolvedStudy, s: SweepSettings): Success[] {
  const models = study.candidates.map((c) => c.name);
  const fitting = study.scenario.fitting;
  return [modelSuccess(models, { criterion: fitting.criterion, margin: fitting.margin }), ...(s.parameter ? [parameterSuccess(s.parameter)] : [])];
}

/**
 * Is it still open whether this point reaches the target? True when its
 * anytime-valid interval (at level alpha) contains the target; a point with no
 * judged datasets is not undecided (nothing more can be learnt from it).
 */
export function undecided(lines: readonly JobLine[], judge: Success, target: number, alpha: number): boolean {
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

/** The rule as summary.json's `sizing.rule` records it for one design. */
export function sizingRule(design: SweepDesign, s: SweepSettings, rounds: number): SizingRule {
  const points = design.study.generating.length * design.study.trialCounts.length;
  return {
    name: 'anytime-valid confidence sequence (Robbins mixture, beta-binomial), more observers where the interval still contains the target',
    reference: 'Robbins (1970) Ann. Math. Stat. 41; Howard, Ramdas, McAuliffe & Sekhon (2021) Annals of Statistics 49',
    alpha: s.alpha,
    pointAlpha: s.alpha / Math.max(1, points),
    mixture: 'uniform Beta(1, 1)',
    initialObservers: s.initial,
    batch: s.batch,
    maxObservers: s.max,
    rounds,
    decision: `after each round, a point whose ${Math.round(100 * (1 - s.alpha))}% anytime-valid interval still contains the target ${s.target} gets ${s.batch} more observers, up to ${s.max}`,
  };
}
