/**
 * `lossprobe size SCENARIO`: the trial-count sweep. Runs the recovery study
 * over a list or range of trial counts with adaptive effort (engine/
 * adaptiveSweep.ts), for the base design and each variant, and writes the
 * run folder with summary.json's `sizing` object and tidy CSV files.
 */
import Table from 'cli-table3';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { applyOverrides, resolveStudy, type ResolvedStudy } from '../engine/resolve.js';
import { adaptiveSweep } from '../engine/adaptiveSweep.js';
import { readScenario, designVariants } from '../scenario/variants.js';
import { sizing, type Sizing, type ParameterTarget } from '../analysis/sizing.js';
import { studySummary, type StudySummary } from '../report/studyOutputs.js';
import { sizingCsv, sizingFigure, sizingNeededCsv, sizingDesignsCsv, type SizedDesign } from '../report/sizingOutputs.js';
import { jsonSafe } from '../analysis/jsonSafe.js';
import { analyticPreview } from '../design/analyticPreview.js';
import { openRunFolder, parseTrials, positiveInt, removeRunFolder, writeAtomically, writeStudyOutputs, type RunFlags } from './run.js';
import { UserError } from './userError.js';
import { writeReport } from '../report/html/writeReport.js';

export interface SizeFlags extends RunFlags {
  target?: string;
  maxObservers?: string;
  batch?: string;
  parameter?: string;
  exclude?: string;
  width?: string;
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

export async function sizeCommand(file: string, flags: SizeFlags, toolVersion: string): Promise<void> {
  if (flags.overwrite && flags.resume) throw new UserError('--overwrite and --resume exclude each other');
  const base = readScenario(file);
  const target = proportionFlag('target', flags.target, 0.8);
  const trials = parseTrials(flags.trials) ?? (Array.isArray(base.trials) ? base.trials : undefined);
  if (!trials || new Set(trials).size < 2) throw new UserError('size needs at least two trial counts: give --trials as a list (60,120,240) or a range (60:480:60), or a list under trials: in the scenario');
  const initial = positiveInt('observers', flags.observers) ?? base.generate.observers;
  const max = positiveInt('max-observers', flags.maxObservers, 100000) ?? 4 * initial;
  if (max < initial) throw new UserError(`--max-observers (${max}) must be at least the initial --observers (${initial})`);
  const batch = positiveInt('batch', flags.batch) ?? initial;
  const workers = positiveInt('workers', flags.workers, 256);
  const seed = flags.seed === undefined ? undefined : Number(flags.seed);
  if (seed !== undefined && (!Number.isInteger(seed) || seed < 0)) throw new UserError(`--seed expects a whole number ≥ 0 (got '${flags.seed}')`);
  const parameter = parameterFlags(flags);
  const root = flags.out ?? join('results', `${base.name}-size`);
  // Resolve every design before touching any folder: a bad variant must not leave half a sweep behind.
  const designs = designVariants(base, file).map(({ variant, scenario }) => {
    // The cap fixes the study (its hash); the rule decides how many observers each point uses.
    const study = resolveStudy(applyOverrides(scenario, { observers: max, trials, seed }), variant === 'base' ? file : `${file} (variant '${variant}')`);
    if (parameter && !study.candidates.some((c) => study.generating.includes(c.name) && c.free.some((p) => p.name === parameter.name)))
      throw new UserError(`--parameter ${parameter.name}: no generating model of ${variant === 'base' ? 'the scenario' : `variant '${variant}'`} fits a free parameter of that name`);
    return { variant, study, folder: variant === 'base' ? root : join(root, 'variants', variant) };
  });
  if (flags.overwrite) removeRunFolder(root);
  const sized: SizedDesign[] = [];
  for (const d of designs) {
    openRunFolder(d.folder, d.study, flags.resume ?? false);
    const result = await sizeDesign(d.study, d.folder, { initial, max, batch, target, parameter, workers, quiet: flags.quiet || flags.json }, toolVersion);
    if (!result) {
      process.stderr.write(`lossprobe: interrupted; finished jobs are kept in ${d.folder}/jobs.jsonl. Continue with --resume.\n`);
      process.exit(130);
    }
    sized.push({ variant: d.variant, folder: d.folder, sizing: result.sizing, overall: result.overall });
  }
  const ranking = rankDesigns(sized);
  if (sized.length > 1) {
    // The base folder's summary also carries the side-by-side comparison.
    const path = join(root, 'summary.json');
    const summary = JSON.parse(readFileSync(path, 'utf8')) as { sizing: Sizing & { designs?: unknown }; variants?: unknown };
    summary.sizing.designs = ranking;
    // Each design's recovery summary over all its jobs, for side-by-side views (e.g. the HTML report).
    summary.variants = sized.map((d) => ({ name: d.variant, folder: d.folder, overall: d.overall }));
    writeAtomically(path, JSON.stringify(summary, null, 2) + '\n');
    writeAtomically(join(root, 'sizing-designs.csv'), sizingDesignsCsv(ranking));
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
  if (flags.json) process.stdout.write(readFileSync(join(root, 'summary.json'), 'utf8'));
  else printSizing(sized, ranking);
}

interface DesignOptions {
  initial: number;
  max: number;
  batch: number;
  target: number;
  parameter?: ParameterTarget;
  workers?: number;
  quiet?: boolean;
}

async function sizeDesign(study: ResolvedStudy, folder: string, o: DesignOptions, toolVersion: string): Promise<{ sizing: Sizing; overall: StudySummary['overall'] } | null> {
  const started = Date.now();
  const onRound = o.quiet ? undefined : (round: number, jobs: number) => process.stderr.write(`${folder}: round ${round + 1}, ${jobs} job${jobs === 1 ? '' : 's'}\n`);
  const out = await adaptiveSweep(study, { folder, workers: o.workers, quiet: o.quiet, initial: o.initial, batch: o.batch, max: o.max, target: o.target, alpha: 0.05, parameter: o.parameter, onRound });
  if (out.interrupted) return null;
  const fitting = study.scenario.fitting;
  const result = sizing(out.lines, {
    candidates: study.candidates.map((c) => c.name),
    generating: study.generating,
    trialCounts: study.trialCounts,
    target: o.target,
    rule: out.rule,
    criterion: fitting.criterion,
    margin: fitting.margin,
    parameter: o.parameter,
  });
  // The analytic prediction at the same counts, beside the simulated accuracies.
  const analytic = analyticPreview(study.scenario, study.candidates, study.generating, { target: o.target, atTrials: study.trialCounts });
  result.predicted = {
    method: analytic.predicted.method,
    points: analytic.predicted.atTrials.flatMap((a) => Object.entries(a.byModel).map(([generating, p]) => ({ generating, trials: a.trials, p }))),
    trialsNeeded: analytic.predicted.trialsNeeded,
  };
  const summary = { ...studySummary(study, out.lines, toolVersion), sizing: jsonSafe(result) };
  writeStudyOutputs(folder, summary, out.lines);
  writeAtomically(join(folder, 'sizing.csv'), sizingCsv(result));
  writeAtomically(join(folder, 'sizing-needed.csv'), sizingNeededCsv(result));
  mkdirSync(join(folder, 'figures'), { recursive: true });
  writeAtomically(join(folder, 'figures', 'sizing-accuracy.svg'), await sizingFigure(result));
  writeFileSync(
    join(folder, 'run-info.json'),
    JSON.stringify({ host: hostname(), workers: o.workers ?? 'all cores', seconds: (Date.now() - started) / 1000, jobsRun: out.ran, jobsFailed: out.failed, rounds: out.rule.rounds, finished: new Date().toISOString() }, null, 2) + '\n',
  );
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
