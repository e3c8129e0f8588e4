/**
 * `lossprobe size SCENARIO`: the trial-count sweep. Runs the recovery study
 * over a list or range of trial counts with adaptive effort (engine/
 * adaptiveSweep.ts), for the base design and each variant, and writes the
 * run folder with summary.json's `sizing` object and tidy CSV files.
 */
import Table from 'cli-table3';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { join, resolve as resolvePath } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { applyOverrides, resolveStudy } from '../engine/resolve.js';
import { adaptiveSweep } from '../engine/adaptiveSweep.js';
import { sizingRule, type Replay, type RoundPlan, type SweepDesign, type SweepSettings } from '../engine/sizeRounds.js';
import { designFolderInRun } from '../engine/sizeShards.js';
import { readRoundPlan, runFolderOfPlan, type RoundPlanFile } from '../engine/roundPlanFile.js';
import { sweepRecord, writeSweepRecord, type SweepRecord } from '../engine/sweepRecord.js';
import { readScenario, designVariants } from '../scenario/variants.js';
import type { Scenario } from '../scenario/schema.js';
import { sizing, type Sizing, type ParameterTarget, type SizingRule } from '../analysis/sizing.js';
import { studySummary, type StudySummary } from '../report/studyOutputs.js';
import { sizingCsv, sizingFigure, sizingNeededCsv, sizingDesignsCsv, type SizedDesign } from '../report/sizingOutputs.js';
import { jsonSafe } from '../analysis/jsonSafe.js';
import { analyticPreview } from '../design/analyticPreview.js';
import { openRunFolder, parseTrials, positiveInt, removeRunFolder, writeAtomically, writeStudyOutputs, type RunFlags } from './run.js';
import { UserError } from './userError.js';
import { writeReport } from '../report/html/writeReport.js';
import { sizeShard } from './sizeRound.js';

export interface SizeFlags extends RunFlags {
  target?: string;
  maxObservers?: string;
  batch?: string;
  parameter?: string;
  exclude?: string;
  width?: string;
  /** A later round's plan file (written by merge); with --shard. */
  roundPlan?: string;
}

function proportionFlag(flag: string, v: string | undefined, fallback: number): number {
  if (v === undefined) return fallback;
  const x = Number(v);
  if (!(x > 0 && x < 1)) throw new UserError(`--${flag} expects a proportion between 0 and 1 (got '${v}')`);
  return x;
}

function parameterFlags(f: SizeFlags): ParameterTarget | undefined {
  if (f.parameter === undefined) {
    if (f.exclude !== undefined || f.width !== undefined) throw new UserError('--exclude and --width need --parameter NAME (e.g. --parameter loss.exponent --exclude 2)');
    return undefined;
  }
  if ((f.exclude === undefined) === (f.width === undefined)) throw new UserError('--parameter needs exactly one of --exclude VALUE or --width W');
  const v = Number(f.exclude ?? f.width);
  if (!Number.isFinite(v) || (f.width !== undefined && !(v > 0))) throw new UserError(`--${f.exclude !== undefined ? 'exclude' : 'width'} expects a ${f.width !== undefined ? 'positive ' : ''}number (got '${f.exclude ?? f.width}')`);
  return f.exclude !== undefined ? { name: f.parameter, exclude: v } : { name: f.parameter, width: v };
}

/** The sweep's flags that are not settings of the sweep itself (a round plan fixes the latter). */
const SETTING_FLAGS = ['trials', 'observers', 'maxObservers', 'batch', 'target', 'seed', 'parameter', 'exclude', 'width'] as const;
const flagName = (k: string) => `--${k.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}`;

/** The sweep's settings from the flags (and the scenario's defaults). */
function settingsFromFlags(base: Scenario, flags: SizeFlags): SweepSettings {
  const target = proportionFlag('target', flags.target, 0.8);
  const trials = parseTrials(flags.trials) ?? (Array.isArray(base.trials) ? base.trials : undefined);
  if (!trials || new Set(trials).size < 2) throw new UserError('size needs at least two trial counts: give --trials as a list (60,120,240) or a range (60:480:60), or a list under trials: in the scenario');
  const initial = positiveInt('observers', flags.observers) ?? base.generate.observers;
  const max = positiveInt('max-observers', flags.maxObservers, 100000) ?? 4 * initial;
  if (max < initial) throw new UserError(`--max-observers (${max}) must be at least the initial --observers (${initial})`);
  const batch = positiveInt('batch', flags.batch) ?? initial;
  const seed = flags.seed === undefined ? null : Number(flags.seed);
  if (seed !== null && (!Number.isInteger(seed) || seed < 0)) throw new UserError(`--seed expects a whole number ≥ 0 (got '${flags.seed}')`);
  const parameter = parameterFlags(flags) ?? null;
  return { trials, initial, batch, max, target, alpha: 0.05, seed, parameter };
}

export interface Sweep {
  designs: SweepDesign[];
  settings: SweepSettings;
  record: SweepRecord;
  /** With --round-plan: the round it holds. */
  plan: RoundPlan | null;
}

/**
 * The sweep the command line describes: its settings (from the flags, or from
 * the --round-plan file of a later round) and every design resolved, before
 * any folder is touched, so a bad variant leaves nothing half-written.
 */
export function sweepFromFlags(file: string, flags: SizeFlags): Sweep {
  const base = readScenario(file);
  let settings: SweepSettings;
  let plan: RoundPlan | null = null;
  let planFile: RoundPlanFile | null = null;
  if (flags.roundPlan !== undefined) {
    const given = SETTING_FLAGS.filter((k) => flags[k] !== undefined);
    if (given.length) throw new UserError(`--round-plan ${flags.roundPlan} fixes the sweep's settings as round 1 ran them; drop ${given.map(flagName).join(', ')}`);
    ({ file: planFile, plan } = readRoundPlan(flags.roundPlan));
    settings = planFile.settings;
  } else settings = settingsFromFlags(base, flags);
  const designs = designVariants(base, file).map(({ variant, scenario }) => {
    // The cap fixes the study (its hash); the rule decides how many observers each point uses.
    const study = resolveStudy(applyOverrides(scenario, { observers: settings.max, trials: settings.trials, seed: settings.seed ?? undefined }), variant === 'base' ? file : `${file} (variant '${variant}')`);
    const parameter = settings.parameter;
    if (parameter && !study.candidates.some((c) => study.generating.includes(c.name) && c.free.some((p) => p.name === parameter.name)))
      throw new UserError(`--parameter ${parameter.name}: no generating model of ${variant === 'base' ? 'the scenario' : `variant '${variant}'`} fits a free parameter of that name`);
    return { variant, study };
  });
  const record = sweepRecord(designs, settings, resolvePath(file));
  if (planFile && planFile.sweepHash !== record.sweepHash)
    throw new UserError(`--round-plan ${flags.roundPlan} belongs to another sweep: ${file} (or a file it reads) differs from the scenario round 1 ran${planFile.scenarioFile !== record.scenarioFile ? ` (${planFile.scenarioFile})` : ''}. Run every round with the same scenario file, unchanged.`);
  return { designs, settings, record, plan };
}

/** --out, else the run folder a round plan sits in, else results/<name>-size. */
export function sweepFolder(sweep: Sweep, flags: { out?: string; roundPlan?: string }): string {
  return flags.out ?? (flags.roundPlan !== undefined ? runFolderOfPlan(flags.roundPlan) : null) ?? join('results', `${sweep.designs[0].study.scenario.name}-size`);
}

export async function sizeCommand(file: string, flags: SizeFlags, toolVersion: string): Promise<void> {
  if (flags.overwrite && flags.resume) throw new UserError('--overwrite and --resume exclude each other');
  if (flags.roundPlan !== undefined && flags.shard === undefined) throw new UserError('--round-plan runs one round of a sweep as shards; add --shard K/N (1/1 runs the whole round on this machine)');
  const sweep = sweepFromFlags(file, flags);
  const workers = positiveInt('workers', flags.workers, 256);
  const root = sweepFolder(sweep, flags);
  if (flags.shard !== undefined) return sizeShard(sweep, root, flags.shard, { ...flags, workers });
  const folderOf = (variant: string) => designFolderInRun(root, variant);
  if (flags.overwrite) removeRunFolder(root);
  for (const d of sweep.designs) openRunFolder(folderOf(d.variant), d.study, flags.resume ?? false);
  const started = Date.now();
  const quiet = flags.quiet || flags.json;
  const onRound = quiet ? undefined : (round: number, jobs: number) => process.stderr.write(`${root}: round ${round}, ${jobs} job${jobs === 1 ? '' : 's'}\n`);
  const out = await adaptiveSweep(sweep.designs, sweep.settings, folderOf, { workers, quiet, onRound });
  if (out.interrupted) {
    process.stderr.write(`lossprobe: interrupted; finished jobs are kept in ${root} (jobs.jsonl of each design). Continue with --resume.\n`);
    process.exit(130);
  }
  writeSweepRecord(root, sweep.record);
  const sized = await finishSweep({ root, sweep, replay: out.replay, toolVersion });
  for (const d of sized)
    writeFileSync(
      join(d.folder, 'run-info.json'),
      JSON.stringify({ host: hostname(), workers: workers ?? 'all cores', seconds: (Date.now() - started) / 1000, jobsRun: out.ran, jobsFailed: out.failed, rounds: d.sizing.rule.rounds, finished: new Date().toISOString() }, null, 2) + '\n',
    );
  printSweep(root, sized, flags.json ?? false);
}

/**
 * The sweep's outputs from the replayed rule: per design summary.json (with
 * `sizing`), CSV files, the figure and report.html; with variants, the
 * side-by-side ranking in the base folder. The single-machine sweep and the
 * merge of a cluster round end here alike, so their folders agree.
 */
export async function finishSweep(o: { root: string; sweep: Sweep; replay: Replay; toolVersion: string; provisional?: string }): Promise<SizedDesign[]> {
  const sized: SizedDesign[] = [];
  for (const d of o.sweep.designs) {
    const folder = designFolderInRun(o.root, d.variant);
    const result = await writeDesignOutputs(d, folder, o.replay.lines.get(d.variant)!, sizingRule(d, o.sweep.settings, o.replay.rounds.get(d.variant)!), o.sweep.settings, o.toolVersion, o.provisional);
    sized.push({ variant: d.variant, folder, sizing: result.sizing, overall: result.overall });
  }
  const ranking = rankDesigns(sized);
  if (sized.length > 1) {
    // The base folder's summary also carries the side-by-side comparison.
    const path = join(o.root, 'summary.json');
    const summary = JSON.parse(readFileSync(path, 'utf8')) as { sizing: Sizing & { designs?: unknown }; variants?: unknown };
    summary.sizing.designs = ranking;
    // Each design's recovery summary over all its jobs, for side-by-side views (e.g. the HTML report).
    summary.variants = sized.map((d) => ({ name: d.variant, folder: d.folder, overall: d.overall }));
    writeAtomically(path, JSON.stringify(summary, null, 2) + '\n');
    writeAtomically(join(o.root, 'sizing-designs.csv'), sizingDesignsCsv(ranking));
  }
  // The sweep's results are written; a report that fails must not turn a finished sweep into an error.
  for (const d of sized) {
    try {
      const report = await writeReport(d.folder);
      for (const p of report.problems) process.stderr.write(`lossprobe: report: ${p}\n`);
    } catch (e) {
      process.stderr.write(`lossprobe: the report of ${d.folder} could not be written (${(e as Error).message}); retry with: lossprobe report ${d.folder}\n`);
    }
  }
  return sized;
}

/** Tables (or summary.json with --json) of a finished sweep. */
export function printSweep(root: string, sized: SizedDesign[], json: boolean): void {
  if (json) process.stdout.write(readFileSync(join(root, 'summary.json'), 'utf8'));
  else printSizing(sized, rankDesigns(sized));
}

async function writeDesignOutputs(d: SweepDesign, folder: string, lines: JobLine[], rule: SizingRule, s: SweepSettings, toolVersion: string, provisional?: string): Promise<{ sizing: Sizing; overall: StudySummary['overall'] }> {
  const study = d.study;
  const fitting = study.scenario.fitting;
  const parameter = s.parameter ?? undefined;
  const result = sizing(lines, {
    candidates: study.candidates.map((c) => c.name),
    generating: study.generating,
    trialCounts: study.trialCounts,
    target: s.target,
    rule,
    criterion: fitting.criterion,
    margin: fitting.margin,
    parameter,
  });
  // The analytic prediction at the same counts, beside the simulated accuracies.
  const analytic = analyticPreview(study.scenario, study.candidates, study.generating, { target: s.target, atTrials: study.trialCounts });
  result.predicted = {
    method: analytic.predicted.method,
    points: analytic.predicted.atTrials.flatMap((a) => Object.entries(a.byModel).map(([generating, p]) => ({ generating, trials: a.trials, p }))),
    trialsNeeded: analytic.predicted.trialsNeeded,
  };
  if (provisional) result.provisional = provisional;
  const summary = { ...studySummary(study, lines, toolVersion), sizing: jsonSafe(result) };
  writeStudyOutputs(folder, summary, lines);
  writeAtomically(join(folder, 'sizing.csv'), sizingCsv(result));
  writeAtomically(join(folder, 'sizing-needed.csv'), sizingNeededCsv(result));
  mkdirSync(join(folder, 'figures'), { recursive: true });
  writeAtomically(join(folder, 'figures', 'sizing-accuracy.svg'), await sizingFigure(result));
  return { sizing: result, overall: summary.overall };
}

export interface DesignRank {
  variant: string;
  folder: string;
  trials: number | null;
  lower: number | null;
  upper: number | null;
  byModel: Record<string, number | null>;
}

/** Designs ranked by the trials every generating model needs (none in range last). */
export function rankDesigns(sized: SizedDesign[]): DesignRank[] {
  return sized
    .map((d) => ({
      variant: d.variant,
      folder: d.folder,
      trials: d.sizing.neededAll.trials,
      lower: d.sizing.neededAll.lower,
      upper: d.sizing.neededAll.upper,
      byModel: Object.fromEntries(d.sizing.needed.map((n) => [n.generating, n.trials])),
    }))
    .sort((a, b) => (a.trials ?? Infinity) - (b.trials ?? Infinity));
}

const pct = (x: number | null) => (x === null ? '–' : `${Math.round(100 * x)}%`);
const plain = { style: { head: [], border: [] }, chars: { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' } };

function printSizing(sized: SizedDesign[], ranking: DesignRank[]): void {
  for (const d of sized) {
    const s = d.sizing;
    console.log(`\nTrial-count sweep${d.variant === 'base' ? '' : ` (variant '${d.variant}')`}: share of datasets whose generating model was chosen (${(s.criterion ?? '').toUpperCase()}), 95% anytime-valid interval, observers used`);
    const gens = [...new Set(s.points.map((p) => p.generating))];
    const t = new Table({ head: ['trials', ...gens, 'overall (balanced)'], ...plain });
    for (const n of s.trialCounts) {
      const row = [String(n)];
      for (const g of gens) {
        const p = s.points.find((q) => q.generating === g && q.trials === n)!;
        row.push(`${pct(p.rate)} [${pct(p.lower)}–${pct(p.upper)}] n=${p.observers}`);
      }
      const o = s.overall.find((q) => q.trials === n)!;
      row.push(pct(o.rate));
      t.push(row);
    }
    console.log(t.toString());
    for (const n of [...s.needed, s.neededAll]) console.log(`  ${n.statement}`);
    if (s.predicted)
      console.log(
        `  Analytic prediction (normal approximation) for comparison: ${gens.map((g) => `${g} ${s.predicted!.trialsNeeded[g] ?? 'never'}`).join(', ')} trials; at the sweep's counts ${gens
          .map((g) => `${g} ${s.trialCounts.map((t) => pct(s.predicted!.points.find((p) => p.generating === g && p.trials === t)?.p ?? null)).join('/')}`)
          .join('; ')}.`,
      );
    if (s.parameter) {
      const par = s.parameter;
      console.log(`  Parameter target: share of observers for whom ${par.success}`);
      const pg = [...new Set(par.points.map((p) => p.generating))];
      const pt = new Table({ head: ['trials', ...pg], ...plain });
      for (const n of s.trialCounts)
        pt.push([String(n), ...pg.map((g) => {
          const p = par.points.find((q) => q.generating === g && q.trials === n)!;
          return `${pct(p.rate)} [${pct(p.lower)}–${pct(p.upper)}] n=${p.observers}`;
        })]);
      console.log(pt.toString());
      for (const n of par.needed) console.log(`    ${n.statement}`);
    }
    console.log(`  Rule: ${s.rule.decision} (${s.rule.reference}); ${s.rule.rounds} round(s).`);
    console.log(
      s.monotonicity.falls.length
        ? `  Warning: accuracy fell between successive counts beyond chance (${s.monotonicity.falls.map((f) => `${f.generating} ${f.from}→${f.to}, p=${f.p.toPrecision(2)}`).join('; ')}); check the fits.`
        : `  Accuracy does not fall significantly between successive counts (${s.monotonicity.test}).`,
    );
    console.log(`  Run folder: ${d.folder}/ (summary.json with 'sizing', sizing.csv, sizing-needed.csv, report.html)`);
  }
  if (ranking.length > 1) {
    console.log('\nDesigns side by side, ranked by the trials every generating model needs:');
    const models = [...new Set(ranking.flatMap((r) => Object.keys(r.byModel)))];
    const t = new Table({ head: ['design', ...models, 'all models', 'interval'], ...plain });
    for (const r of ranking)
      t.push([r.variant, ...models.map((m) => String(r.byModel[m] ?? 'none in range')), String(r.trials ?? 'none in range'), `${r.lower === null ? '≤ first' : `> ${r.lower}`}, ${r.upper === null ? 'beyond range' : `≤ ${r.upper}`}`]);
    console.log(t.toString());
  }
  console.log(`\n${sized[0]?.sizing.caution ?? ''}`);
}
