/**
 * The trial-count sweep on a cluster, one round at a time:
 * `size SCENARIO --shard K/N` runs shard K of round 1, `size SCENARIO
 * --round-plan <run folder>/round-R/plan.json --shard K/N` shard K of a
 * later round, and `merge <run folder>/round-R --out <run folder>` joins a
 * round (the `size` entry of merge's table), writes the same outputs as a
 * single-machine `size`, and says whether another round is needed, writing
 * its plan. Round planning lives in engine/sizeRounds.ts, shard folders and
 * the join in engine/sizeShards.ts; this file parses, calls and prints.
 */
import { existsSync, writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { join, resolve } from 'node:path';
import { runRound } from '../engine/adaptiveSweep.js';
import { writeFileAtomically } from '../engine/atomicFile.js';
import type { ShardFolder } from '../engine/mergeShards.js';
import { roundFolder, writeRoundPlan } from '../engine/roundPlanFile.js';
import { parseShard } from '../engine/shard.js';
import { openShard, recordShard, SHARD_FILE } from '../engine/shardFolder.js';
import { firstRound, roundJobs, type RoundPlan, type SweepSettings } from '../engine/sizeRounds.js';
import { designFolderInRun, designFolderInShard, joinSizeRound, sweepOfShard } from '../engine/sizeShards.js';
import { writeSweepRecord, type SweepRecord } from '../engine/sweepRecord.js';
import { openRunFolder, prepareRunFolder } from './run.js';
import type { Sweep } from './size.js';
import { finishSweep, printSweep } from './sizeFinish.js';
import { shellQuote } from '../cluster/slurmScripts.js';
import { UserError } from './userError.js';
import type { NextRound } from './merge.js';

/** The flags that give `size` these settings (round 1's command line, written out in full). */
export function sweepFlags(s: SweepSettings): string[] {
  return [
    '--trials', s.trials.join(','),
    '--observers', String(s.initial),
    '--max-observers', String(s.max),
    '--batch', String(s.batch),
    '--target', String(s.target),
    ...(s.seed === null ? [] : ['--seed', String(s.seed)]),
    ...(s.parameter ? ['--parameter', s.parameter.name, ...(s.parameter.exclude !== undefined ? ['--exclude', String(s.parameter.exclude)] : ['--width', String(s.parameter.width)])] : []),
  ];
}

/** The arguments after `lossprobe size` that name round R's plan: the settings for round 1, the plan file for later rounds. */
function roundArgs(record: SweepRecord, root: string, round: number): string[] {
  return [record.scenarioFile, ...(round === 1 ? sweepFlags(record.settings) : ['--round-plan', join(root, `round-${round}`, 'plan.json')])];
}

const words = (args: string[]) => args.map(shellQuote).join(' ');

export async function sizeShard(sweep: Sweep, root: string, shardText: string, flags: { workers?: number; quiet?: boolean; json?: boolean; resume?: boolean; overwrite?: boolean }): Promise<void> {
  const shard = parseShard(shardText);
  if (typeof shard === 'string') throw new UserError(shard);
  const plan = sweep.plan ?? firstRound(sweep.designs, sweep.settings);
  const baseStudy = sweep.designs[0].study;
  const start = openShard({ base: roundFolder(root, plan.round), shard, command: 'size', name: baseStudy.scenario.name, scenarioHash: sweep.record.sweepHash, seed: baseStudy.scenario.seed, plan: roundJobs(plan) });
  const record = { ...start.record, round: plan.round };
  const folder = start.folder;
  // The shard folder's top holds no jobs.jsonl that prepareRunFolder could check, so a resumed shard's record is checked first:
  // another sweep's shard folder must be refused before anything in it is rewritten.
  if (!flags.overwrite && existsSync(join(folder, SHARD_FILE))) recordShard(folder, record);
  // The shard's scenario.json carries the sweep's hash (merge checks it against shard.json); each design's folder carries its own.
  prepareRunFolder(folder, { hash: sweep.record.sweepHash, scenario: baseStudy.scenario }, flags);
  for (const d of sweep.designs) openRunFolder(designFolderInShard(folder, d.variant), d.study, flags.resume ?? false);
  recordShard(folder, record);
  writeSweepRecord(folder, sweep.record);
  const started = Date.now();
  const out = await runRound(sweep.designs, start.jobs, (v) => designFolderInShard(folder, v), { workers: flags.workers, quiet: flags.quiet || flags.json });
  if (out.interrupted) {
    process.stderr.write(`lossprobe: interrupted; finished jobs are kept in ${folder}. Continue with --resume.\n`);
    process.exit(130);
  }
  writeFileSync(join(folder, 'run-info.json'), JSON.stringify({ host: hostname(), workers: flags.workers ?? 'all cores', seconds: (Date.now() - started) / 1000, jobsRun: out.ran, jobsFailed: out.failed, finished: new Date().toISOString() }, null, 2) + '\n');
  if (flags.json) {
    process.stdout.write(JSON.stringify({ round: plan.round, shard: record.shard, folder, jobs: record.jobs, failed: out.failed, plannedJobs: record.plan.jobs }, null, 2) + '\n');
    return;
  }
  console.log(`Shard ${shard.index} of ${shard.count} of round ${plan.round} of the sweep '${record.name}': ${record.jobs} of the round's ${record.plan.jobs} jobs are in ${folder}/${out.failed ? ` (${out.failed} failed)` : ''}.`);
  console.log(`When every shard of round ${plan.round} has finished, join them with:\n  lossprobe merge ${roundFolder(root, plan.round)} --out ${root}`);
}

/** `merge` of one round's shards into the sweep's run folder (the `size` entry of merge's table). */
export async function mergeSizeRound(shards: readonly ShardFolder[], o: { out: string; json: boolean; toolVersion: string }): Promise<{ jobs: number; failed: number; round: number; next: NextRound }> {
  const { record, designs } = sweepOfShard(shards[0]);
  const out = o.out;
  if (shards.some((s) => resolve(s.folder) === resolve(out))) throw new UserError(`--out ${out} is one of the shard folders; choose the sweep's run folder (e.g. the folder that holds round-1, round-2, …)`);
  const count = shards[0].record.shard.count;
  const round = shards[0].record.round ?? 1;
  const hint = (k: number) => `shard ${k}: \`lossprobe size ${words(roundArgs(record, out, round))} --shard ${k}/${count} --out ${out} --resume\`, or \`sbatch --array=${k} ${join(roundFolder(out, round), 'slurm', 'array.sbatch')}\``;
  const joined = joinSizeRound(shards, designs, record, out, hint);
  // Everything is checked; from here on the run folder is written, each file atomically.
  // Every design's folder is checked (and made) before any jobs.jsonl is replaced.
  for (const d of designs) openRunFolder(designFolderInRun(out, d.variant), d.study, true);
  let jobs = 0;
  for (const d of designs) {
    const folder = designFolderInRun(out, d.variant);
    const lines = joined.after.lines.get(d.variant)!;
    writeFileAtomically(join(folder, 'jobs.jsonl'), lines.map((l) => JSON.stringify(l) + '\n').join(''));
    jobs += lines.length;
  }
  writeSweepRecord(out, record);
  const sweep: Sweep = { designs, settings: record.settings, record, plan: null };
  const nextPlan = joined.after.next;
  const provisional = nextPlan
    ? `Provisional: this sweep runs in rounds on a cluster and holds ${round === 1 ? 'round 1' : `rounds 1–${round}`} only; round ${nextPlan.round} (plan ${join(roundFolder(out, nextPlan.round), 'plan.json')}) is still to run, and points whose interval contains the target will get more observers. The numbers describe the rounds so far.`
    : undefined;
  const sized = await finishSweep({ root: out, sweep, replay: joined.after, toolVersion: o.toolVersion, provisional });
  const planFile = nextPlan ? writeRoundPlan(out, { name: record.name, scenarioFile: record.scenarioFile, sweepHash: record.sweepHash, settings: record.settings, plan: nextPlan }) : undefined;
  const failed = [...joined.after.lines.values()].flat().filter((l) => l.status !== 'ok').length;
  const text = roundReport({ record, out, round, shards: shards.length, added: joined.jobs, jobs, failed, next: nextPlan, planFile, capped: joined.after.capped, count });
  printSweep(out, sized, o.json);
  // With --json, standard output is summary.json alone; the round's outcome goes to standard error.
  (o.json ? (s: string) => process.stderr.write(s + '\n') : console.log)(text.join('\n'));
  return {
    jobs,
    failed,
    round,
    next: nextPlan
      ? { needed: true, reason: `${nextPlan.points.length} point${nextPlan.points.length > 1 ? 's' : ''} still straddle${nextPlan.points.length > 1 ? '' : 's'} the target; round ${nextPlan.round} adds ${roundJobs(nextPlan).length} jobs`, plan: planFile }
      : { needed: false, reason: `the rule adds no observers after round ${round}; the sweep is finished` },
  };
}

/** The round's outcome in plain words, with the exact commands of the next round. */
function roundReport(o: { record: SweepRecord; out: string; round: number; shards: number; added: number; jobs: number; failed: number; next: RoundPlan | null; planFile?: string; capped: { design: string; generating: string; trials: number }[]; count: number }): string[] {
  const s = o.record.settings;
  const lines = [
    '',
    `Round ${o.round} of the sweep '${o.record.name}' is merged: ${o.shards} shard${o.shards > 1 ? 's' : ''}, ${o.added} jobs; ${o.out}/ now holds ${o.round === 1 ? 'round 1' : `rounds 1–${o.round}`} (${o.jobs} jobs${o.failed ? `, ${o.failed} failed` : ''}).`,
  ];
  const capped = o.capped.length
    ? ` ${o.capped.length} point${o.capped.length > 1 ? 's' : ''} reached the cap of ${s.max} observers with the target still inside the interval (${groupPoints(o.capped)}); a larger --max-observers would be a new sweep.`
    : '';
  if (!o.next) {
    lines.push(`No further round is needed: every point's 95% anytime-valid interval lies on one side of the target ${s.target}, or the point has the cap of ${s.max} observers.${capped} The folder is final; it equals a single-machine \`size\` with the same seed and settings.`);
    return lines;
  }
  const next = o.next;
  const jobs = roundJobs(next).length;
  const { from, to } = next.points[0];
  const same = next.points.every((p) => p.from === from && p.to === to);
  const n = Math.min(o.count, jobs);
  const out = o.out;
  lines.push(
    `Another round is needed: ${next.points.length} point${next.points.length > 1 ? 's' : ''} still straddle the target ${s.target} (the 95% anytime-valid interval contains it), so round ${next.round} gives ${next.points.length > 1 ? 'each' : 'it'} ${same ? `${to - from} more observer${to - from > 1 ? 's' : ''} (observers ${from + 1}–${to} of at most ${s.max})` : `more observers, up to ${s.max}`}:`,
    ...designLines(next.points),
    `Until the sweep is finished, the tables above and the folder's summary.json describe the rounds so far only: provisional.`,
    `Round ${next.round}'s plan (${jobs} jobs) is written to ${o.planFile}. Run its shards (K = 1..${n}; any N up to ${jobs}), then merge:`,
    `  lossprobe size ${words(roundArgs(o.record, out, next.round))} --shard K/${n} --out ${out} --resume`,
    `  lossprobe merge ${roundFolder(out, next.round)} --out ${out}`,
    'or on Slurm, write and submit its array and merge jobs:',
    `  lossprobe cluster ${words([o.record.scenarioFile, '--round-plan', o.planFile!])} --shards ${n} --out ${out}`,
    `  bash ${join(roundFolder(out, next.round), 'slurm', 'submit.sh')}`,
  );
  if (capped) lines.push(capped.trim());
  return lines;
}

/** "base: squared at 40, 80 trials; shifted at 20 trials" per design. */
function designLines(points: readonly { design: string; generating: string; trials: number }[]): string[] {
  const designs = [...new Set(points.map((p) => p.design))];
  return designs.map((d) => `  ${d}: ${groupPoints(points.filter((p) => p.design === d), false)}`);
}

function groupPoints(points: readonly { design: string; generating: string; trials: number }[], withDesign = true): string {
  const groups = new Map<string, number[]>();
  for (const p of points) {
    const k = withDesign ? `${p.design} ${p.generating}` : p.generating;
    groups.set(k, [...(groups.get(k) ?? []), p.trials]);
  }
  return [...groups].map(([k, t]) => `${k} at ${t.join(', ')} trials`).join('; ');
}
