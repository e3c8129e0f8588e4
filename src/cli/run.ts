/**
 * `lossprobe run SCENARIO`: a recovery study. Simulates synthetic observers
 * for every generating model, refits every candidate on a worker pool, and
 * writes the run folder: scenario.json, jobs.jsonl, summary.json, CSV files.
 */
import Table from 'cli-table3';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { loadStudy, type ResolvedStudy } from '../engine/resolve.js';
import { runStudy } from '../engine/runStudy.js';
import { planJobs, type JobSpec } from '../engine/plan.js';
import { parseShard } from '../engine/shard.js';
import { mergeHint, openShard, recordShard, type ShardRecord } from '../engine/shardFolder.js';
import { writeFileAtomically as writeAtomically } from '../engine/atomicFile.js';
import { confusionCsv, fitsCsv, inversionCsv, parametersCsv, studySummary, type StudySummary } from '../report/studyOutputs.js';
import { UserError } from './userError.js';
import { writeReport } from '../report/html/writeReport.js';
import { formatNumber } from '../report/format.js';

export interface RunFlags {
  observers?: string;
  trials?: string;
  seed?: string;
  workers?: string;
  out?: string;
  resume?: boolean;
  overwrite?: boolean;
  json?: boolean;
  quiet?: boolean;
  shard?: string;
}

export function positiveInt(flag: string, v: string | undefined, max = 1e6): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < 1 || n > max) throw new UserError(`--${flag} expects a whole number from 1 to ${max} (got '${v}')`);
  return n;
}

export function parseTrials(v: string | undefined): number[] | undefined {
  if (v === undefined) return undefined;
  const range = /^(\d+):(\d+):(\d+)$/.exec(v);
  if (range) {
    const [start, end, step] = [Number(range[1]), Number(range[2]), Number(range[3])];
    if (!(step >= 1 && end >= start && (end - start) / step < 200))
      throw new UserError(`--trials range start:end:step needs step ≥ 1, end ≥ start and at most 200 counts (got '${v}')`);
  }
  const list = range
    ? Array.from({ length: Math.floor((Number(range[2]) - Number(range[1])) / Number(range[3])) + 1 }, (_, i) => Number(range[1]) + i * Number(range[3]))
    : v.split(',').map((s) => Number(s.trim()));
  if (!list.length || list.some((n) => !Number.isInteger(n) || n < 10)) throw new UserError(`--trials expects whole numbers ≥ 10, as a list (60,120,240) or a range start:end:step (got '${v}')`);
  return list;
}

export function studyFromFlags(file: string, f: RunFlags): ResolvedStudy {
  const seed = f.seed === undefined ? undefined : Number(f.seed);
  if (seed !== undefined && (!Number.isInteger(seed) || seed < 0)) throw new UserError(`--seed expects a whole number ≥ 0 (got '${f.seed}')`);
  return loadStudy(file, { observers: positiveInt('observers', f.observers), trials: parseTrials(f.trials), seed });
}

/** Prepare (or reopen for --resume) a run folder; refuse to mix studies. */
export function openRunFolder(folder: string, study: ResolvedStudy, resume: boolean): void {
  const scenarioPath = join(folder, 'scenario.json');
  if (existsSync(join(folder, 'jobs.jsonl'))) {
    if (!resume) throw new UserError(`${folder} already holds a run; add --resume to continue it, or choose another folder with --out`);
    const prior = runFolderScenario(folder) ?? {};
    if (prior.hash !== study.hash)
      throw new UserError(`${folder} holds a run of a different scenario or settings (scenario hash differs); resume it with the same file and flags, or use another --out`);
    return;
  }
  try {
    mkdirSync(folder, { recursive: true });
    writeAtomically(scenarioPath, JSON.stringify({ hash: study.hash, scenario: study.scenario }, null, 2) + '\n');
  } catch (e) {
    throw new UserError(`cannot create the run folder ${folder}: ${(e as Error).message}`);
  }
}

/** For --overwrite: delete the folder, but only if it is recognisably a run folder. */
export function removeRunFolder(folder: string): void {
  if (!existsSync(folder)) return;
  const isRun = existsSync(join(folder, 'jobs.jsonl')) || runFolderScenario(folder) !== null || (statSync(folder).isDirectory() && readdirSync(folder).length === 0);
  if (!isRun) throw new UserError(`--overwrite refuses to delete ${folder}: it is not a run folder (no scenario.json or jobs.jsonl)`);
  rmSync(folder, { recursive: true, force: true });
}

/** The {hash, scenario} record of a run folder, or null when absent or unreadable. */
function runFolderScenario(folder: string): { hash?: string } | null {
  try {
    const v = JSON.parse(readFileSync(join(folder, 'scenario.json'), 'utf8')) as { hash?: unknown; scenario?: unknown };
    return typeof v.hash === 'string' && v.scenario ? { hash: v.hash } : null;
  } catch {
    return null;
  }
}

/** Kept under this name for the commands that import it from here. */
export { writeAtomically };

export function writeStudyOutputs(folder: string, summary: StudySummary, lines: Parameters<typeof fitsCsv>[0]): void {
  writeAtomically(join(folder, 'summary.json'), JSON.stringify(summary, null, 2) + '\n');
  writeAtomically(join(folder, 'fits.csv'), fitsCsv(lines));
  writeAtomically(join(folder, 'parameters.csv'), parametersCsv(lines));
  writeAtomically(join(folder, 'confusion.csv'), confusionCsv(summary));
  writeAtomically(join(folder, 'inversion.csv'), inversionCsv(summary));
}

const pct = (x: number | null | undefined) => formatNumber(x, 'percent');
const compact = { style: { head: [], border: [] }, chars: { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' } };

export function printStudy(summary: StudySummary, folder: string, reportPath?: string): void {
  const s = summary.overall;
  const c = s.confusion;
  console.log(`\nRecovery study '${summary.name}' (seed ${formatNumber(summary.seed, 'id')}, ${formatNumber(s.jobs, 'count')} datasets, criterion ${summary.criterion.toUpperCase()})`);
  console.log('Rows: generating model. Columns: model chosen (share of that row\'s datasets).');
  const table = new Table({ head: ['generating ↓ / chosen →', ...c.columns, 'undecided', 'failed fit'], ...compact });
  c.rows.forEach((r, i) => table.push([`${r} (n=${formatNumber(c.n[i], 'count')})`, ...c.columns.map((_, j) => pct(c.rate[i][j])), pct(c.undecidedRate[i]), pct(c.failedRate[i])]));
  console.log(table.toString());
  const a = s.accuracy;
  console.log(`Overall: generating model chosen in ${pct(a.estimate)} of datasets [95% interval ${pct(a.lower)}–${pct(a.upper)}]; chance ${pct(s.chance)}.`);
  for (const v of s.verdicts) console.log(`  ${v.text}`);
  const rec = new Table({ head: ['parameter recovery', 'parameter', 'r', 'RMSE', 'coverage'], ...compact });
  for (const m of s.recovery) for (const [k, p] of m.parameters.entries()) rec.push([k === 0 ? m.generating : '', p.name, formatNumber(p.pearson, 'correlation'), formatNumber(p.rmse, 'value'), pct(p.coverage.estimate)]);
  if (rec.length) console.log(rec.toString());
  console.log('\nA simulation holds only under its assumptions; it complements, not replaces, a pilot study and the advice of your ethics board and statistician.');
  console.log(`Run folder: ${folder}/ (summary.json, jobs.jsonl, fits.csv, parameters.csv, confusion.csv, inversion.csv, figures/)`);
  if (reportPath) console.log(`Report: ${reportPath}`);
}

/** report.html for a finished run folder; a report that fails must not turn a finished run into an error. */
export async function writeReportOrWarn(folder: string): Promise<string | undefined> {
  try {
    const report = await writeReport(folder);
    for (const p of report.problems) process.stderr.write(`lossprobe: report: ${p}\n`);
    return report.path;
  } catch (e) {
    process.stderr.write(`lossprobe: the report could not be written (${(e as Error).message}); the run folder is complete, retry with: lossprobe report ${folder}\n`);
    return undefined;
  }
}

/** With --shard K/N: the shard's folder inside the run folder, its slice of the plan and its shard.json record. */
function shardOfRun(study: ResolvedStudy, base: string, text: string | undefined): { folder: string; jobs?: JobSpec[]; record?: ShardRecord } {
  if (text === undefined) return { folder: base };
  const shard = parseShard(text);
  if (typeof shard === 'string') throw new UserError(shard);
  return openShard({ base, shard, command: 'run', name: study.scenario.name, scenarioHash: study.hash, seed: study.scenario.seed, plan: planJobs(study) });
}

export async function runCommand(file: string, flags: RunFlags, toolVersion: string): Promise<void> {
  const study = studyFromFlags(file, flags);
  const base = flags.out ?? join('results', study.scenario.name);
  if (flags.overwrite && flags.resume) throw new UserError('--overwrite and --resume exclude each other');
  // Check every flag before touching the folder: a typo must not delete (--overwrite) or create a run folder.
  const workers = positiveInt('workers', flags.workers, 256);
  const { folder, jobs, record } = shardOfRun(study, base, flags.shard);
  if (flags.overwrite) removeRunFolder(folder);
  openRunFolder(folder, study, flags.resume ?? false);
  if (record) recordShard(folder, record);
  const started = Date.now();
  const outcome = await runStudy(study, { folder, workers, jobs, quiet: flags.quiet || flags.json });
  if (outcome.interrupted) {
    process.stderr.write(`lossprobe: interrupted; ${outcome.lines.length} finished jobs are kept in ${folder}/jobs.jsonl. Continue with --resume.\n`);
    process.exit(130);
  }
  writeFileSync(
    join(folder, 'run-info.json'),
    JSON.stringify({ host: hostname(), workers: workers ?? 'all cores', seconds: (Date.now() - started) / 1000, jobsRun: outcome.ran, jobsResumed: outcome.skipped, jobsFailed: outcome.failed, finished: new Date().toISOString() }, null, 2) + '\n',
  );
  if (record) return printShard(record, folder, base, outcome.failed, flags.json ?? false);
  const summary = studySummary(study, outcome.lines, toolVersion);
  writeStudyOutputs(folder, summary, outcome.lines);
  const reportPath = await writeReportOrWarn(folder);
  if (flags.json) process.stdout.write(JSON.stringify(summary, null, 2) + '\n');
  else printStudy(summary, folder, reportPath);
}

/**
 * A shard writes no summary: a slice of the plan summarised on its own would
 * pass for a (smaller, skewed) study. It says what to do next instead.
 */
function printShard(record: ShardRecord, folder: string, base: string, failed: number, json: boolean): void {
  const { index, count } = record.shard;
  if (json) {
    process.stdout.write(JSON.stringify({ shard: record.shard, folder, jobs: record.jobs, failed, plannedJobs: record.plan.jobs }, null, 2) + '\n');
    return;
  }
  console.log(`Shard ${index} of ${count} of '${record.name}': ${record.jobs} of the plan's ${record.plan.jobs} jobs are in ${folder}/jobs.jsonl${failed ? ` (${failed} failed)` : ''}.`);
  console.log(`When every shard has finished, join them with:\n  ${mergeHint(base, count)}`);
}
