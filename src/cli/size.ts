/**
 * `lossprobe size SCENARIO`: the trial-count sweep. Resolves the sweep from
 * the flags (or a later round's plan file), then runs it on this machine
 * round after round (engine/adaptiveSweep.ts) for the base design and each
 * variant and writes the run folder (cli/sizeFinish.ts), or, with --shard,
 * runs one shard of one round (cli/sizeRound.ts).
 */
import { writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { join, resolve as resolvePath } from 'node:path';
import type { ParameterTarget } from '../analysis/sizing.js';
import { adaptiveSweep } from '../engine/adaptiveSweep.js';
import { applyOverrides, resolveStudy } from '../engine/resolve.js';
import { readRoundPlan, runFolderOfPlan, type RoundPlanFile } from '../engine/roundPlanFile.js';
import type { RoundPlan, SweepDesign, SweepSettings } from '../engine/sizeRounds.js';
import { designFolderInRun } from '../engine/sizeShards.js';
import { sweepRecord, writeSweepRecord, type SweepRecord } from '../engine/sweepRecord.js';
import type { Scenario } from '../scenario/schema.js';
import { readScenario, designVariants } from '../scenario/variants.js';
import { openRunFolder, parseTrials, positiveInt, removeRunFolder, type RunFlags } from './run.js';
import { finishSweep, printSweep } from './sizeFinish.js';
import { sizeShard } from './sizeRound.js';
import { UserError } from './userError.js';

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
