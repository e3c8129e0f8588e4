/**
 * `lossprobe plan SCENARIO`: size participants × trials for the planned
 * group analysis. Fills (or resumes) a pool of per-participant fits with the
 * recovery engine, resamples whole studies from it over the grid, and writes
 * summary.json (the pool's recovery summary plus a `plan` object), the
 * pool's CSV files, plan.csv and figures/plan-heatmap.svg into the run folder
 * (default results/<name>-plan).
 */
import Table from 'cli-table3';
import { existsSync, mkdirSync, readdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { GridCell } from '../analysis/planGrid.js';
import { loadPlan } from '../engine/planStudy.js';
import { planResults } from '../engine/planResults.js';
import { planJobs } from '../engine/plan.js';
import { runStudy } from '../engine/runStudy.js';
import { parseShard } from '../engine/shard.js';
import { mergeHint, openShard, recordShard } from '../engine/shardFolder.js';
import { planHeatmap } from '../report/planHeatmap.js';
import { describeAnalysis, percentNear, planCsv, planNotes, planSummary, PLAN_CAUTION, type PlanInputs } from '../report/planSummary.js';
import { openRunFolder, parseTrials, writeReportOrWarn, writeStudyOutputs, type RunFlags } from './run.js';
import { UserError } from './userError.js';

/** The flags of `run` (except --observers: the pool size is --pool), plus the plan's own. */
export interface PlanFlags extends Omit<RunFlags, 'observers'> {
  participants?: string;
  pool?: string;
  resamples?: string;
  poolReplicates?: string;
  shard?: string;
}

function wholeNumber(flag: string, v: string | undefined, min: number, max: number): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < min || n > max) throw new UserError(`--${flag} expects a whole number from ${min} to ${max} (got '${v}')`);
  return n;
}

function participantList(v: string | undefined): number[] | undefined {
  if (v === undefined) return undefined;
  const list = v.split(',').map((s) => Number(s.trim()));
  if (!list.length || list.some((n) => !Number.isInteger(n) || n < 2 || n > 100_000)) throw new UserError(`--participants expects whole numbers from 2 to 100000, as a list such as 10,20,40 (got '${v}')`);
  return [...new Set(list)];
}

/** Write every file to a temporary name first, then rename them all: no output is ever seen half-written. */
function writeOutputs(folder: string, files: Record<string, string>): void {
  const staged: [string, string][] = [];
  for (const [name, text] of Object.entries(files)) {
    const path = join(folder, name);
    mkdirSync(join(path, '..'), { recursive: true });
    const tmp = `${path}.partial-${process.pid}`;
    writeFileSync(tmp, text);
    staged.push([tmp, path]);
  }
  for (const [tmp, path] of staged) renameSync(tmp, path);
}

const pct = (x: number | null) => (x === null || !Number.isFinite(x) ? '–' : `${Math.round(100 * x)}%`);

export function printPlan(x: PlanInputs, folder: string, reportPath?: string): void {
  const ns = [...new Set(x.cells.map((c) => c.participants))];
  const ts = x.pool.trials;
  console.log(`\nGroup plan '${x.name}' (seed ${x.seed}, ${x.plan.resamples} simulated studies per cell)`);
  console.log(`Group analysis: ${describeAnalysis(x.plan, x.majority)}.`);
  const which = x.cells[0]?.withPool ? "95% interval, including the pool's sampling error" : '95% interval of the resampling';
  console.log(`P(correct group conclusion) [${which}]; * reaches the target ${pct(x.plan.target)}.`);
  const table = new Table({
    head: ['participants ↓ / trials →', ...ts.map(String)],
    style: { head: [], border: [] },
    chars: { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' },
  });
  const cell = (c: GridCell | undefined) => {
    if (!c) return '';
    const i = c.withPool ?? c.correct;
    return `${percentNear(c.correct.estimate, x.plan.target)} [${pct(i.lower)}–${pct(i.upper)}]${c.correct.estimate >= x.plan.target ? ' *' : ''}`;
  };
  for (const n of ns) table.push([String(n), ...ts.map((t) => cell(x.cells.find((c) => c.participants === n && c.trials === t)))]);
  console.log(table.toString());
  const ch = x.choice;
  const pair = (c: GridCell) => `N = ${c.participants}, T = ${c.trials} (${percentNear(c.correct.estimate, x.plan.target)})`;
  if (ch.cheapest) console.log(`Cheapest design reaching the target: ${pair(ch.cheapest.cell)}, cost ${+ch.cheapest.cost.toFixed(2)}.`);
  if (ch.frontier.length) console.log(`Smallest designs reaching the target (fewer participants need more trials): ${ch.frontier.map(pair).join('; ')}.`);
  for (const n of planNotes(x)) console.log(`\n${n}`);
  console.log(`\n${PLAN_CAUTION}`);
  console.log(`Run folder: ${folder}/ (summary.json, plan.csv, figures/plan-heatmap.svg, jobs.jsonl and the pool's fits.csv, parameters.csv, confusion.csv, inversion.csv)`);
  if (reportPath) console.log(`Report: ${reportPath}`);
}

export async function planCommand(file: string, flags: PlanFlags, toolVersion: string): Promise<void> {
  const seed = wholeNumber('seed', flags.seed, 0, Number.MAX_SAFE_INTEGER);
  const p = loadPlan(file, {
    seed,
    participants: participantList(flags.participants),
    trials: parseTrials(flags.trials),
    pool: wholeNumber('pool', flags.pool, 2, 100_000),
    resamples: wholeNumber('resamples', flags.resamples, 20, 1_000_000),
    poolReplicates: wholeNumber('pool-replicates', flags.poolReplicates, 0, 1000),
  });
  if (flags.overwrite && flags.resume) throw new UserError('--overwrite and --resume exclude each other');
  const workers = wholeNumber('workers', flags.workers, 1, 256);
  const shard = flags.shard === undefined ? undefined : parseShard(flags.shard);
  if (typeof shard === 'string') throw new UserError(shard);
  const base = flags.out ?? join('results', `${p.pool.scenario.name}-plan`);
  // A shard of the pool is an ordinary shard (engine/shardFolder.ts), so `lossprobe merge` joins plan shards like run shards.
  const sharded = shard
    ? openShard({ base, shard, command: 'plan', name: p.pool.scenario.name, scenarioHash: p.pool.hash, seed: p.pool.scenario.seed, plan: planJobs(p.pool) })
    : undefined;
  const folder = sharded ? sharded.folder : base;
  if (flags.overwrite && existsSync(folder)) {
    // Only ever delete what is recognisably a run folder.
    const isRun = existsSync(join(folder, 'jobs.jsonl')) || existsSync(join(folder, 'scenario.json')) || readdirSync(folder).length === 0;
    if (!isRun) throw new UserError(`--overwrite refuses to delete ${folder}: it is not a run folder (no scenario.json or jobs.jsonl)`);
    rmSync(folder, { recursive: true, force: true });
  }
  openRunFolder(folder, p.pool, flags.resume ?? false);
  if (sharded) recordShard(folder, sharded.record);
  const jobs = sharded?.jobs;
  const outcome = await runStudy(p.pool, { folder, workers, jobs, quiet: flags.quiet || flags.json });
  if (outcome.interrupted) {
    process.stderr.write(`lossprobe: interrupted; ${outcome.lines.length} finished pool fits are kept in ${folder}/jobs.jsonl. Continue with --resume.\n`);
    process.exit(130);
  }
  if (shard && jobs) {
    if (flags.json) process.stdout.write(JSON.stringify({ shard, folder, jobs: jobs.length, failed: outcome.failed }, null, 2) + '\n');
    else
      console.log(
        `Shard ${shard.index} of ${shard.count} of the pool of '${p.pool.scenario.name}': ${jobs.length} of ${planJobs(p.pool).length} fits are in ${folder}/jobs.jsonl. When every shard has finished, join them with\n  ${mergeHint(base, shard.count)}\nthen resample the studies with: lossprobe plan ${file} --out ${base} --resume`,
      );
    return;
  }
  if (!flags.quiet && !flags.json) process.stderr.write(`Resampling ${p.plan.resamples} studies for each of ${p.plan.participants.length * p.pool.trialCounts.length} (participants, trials) cells…\n`);
  const inputs = await planResults(p, outcome.lines, { workers, toolVersion, folder });
  const s = p.pool.scenario;
  const summary = planSummary(p.pool, outcome.lines, inputs);
  writeStudyOutputs(folder, summary, outcome.lines);
  writeOutputs(folder, {
    'plan.csv': planCsv(inputs),
    'figures/plan-heatmap.svg': await planHeatmap(inputs.cells, p.plan.target, `P(correct group conclusion): ${s.name}`),
  });
  const reportPath = await writeReportOrWarn(folder);
  if (flags.json) process.stdout.write(JSON.stringify(summary, null, 2) + '\n');
  else printPlan(inputs, folder, reportPath);
}
