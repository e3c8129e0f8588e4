/**
 * A finished (or, merged round by round, provisional) trial-count sweep's
 * outputs and tables: per design the `sizing` object with the analytic
 * prediction beside it, summary.json, CSV files, the figure and report.html,
 * and with variants the designs ranked side by side. The single-machine
 * `size` (cli/size.ts) and the merge of a cluster round (cli/sizeRound.ts)
 * both end here, so their folders agree.
 */
import Table from 'cli-table3';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { jsonSafe } from '../analysis/jsonSafe.js';
import { sizing, type Sizing, type SizingRule } from '../analysis/sizing.js';
import { analyticPreview } from '../design/analyticPreview.js';
import { sizingRule, type Replay, type SweepDesign, type SweepSettings } from '../engine/sizeRounds.js';
import { designFolderInRun } from '../engine/sizeShards.js';
import { writeReport } from '../report/html/writeReport.js';
import { sizingCsv, sizingDesignsCsv, sizingFigure, sizingNeededCsv, type SizedDesign } from '../report/sizingOutputs.js';
import { studySummary, type StudySummary } from '../report/studyOutputs.js';
import { writeAtomically, writeStudyOutputs } from './run.js';
import type { Sweep } from './size.js';

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
