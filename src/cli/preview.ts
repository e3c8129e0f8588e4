/**
 * `lossprobe preview`: what each candidate loss makes the observer report,
 * before any simulation. Prints the estimate at a few measurements per loss
 * and writes the loss shapes and the estimate curves x̂(m) as SVG figures.
 */
import Table from 'cli-table3';
import { join } from 'node:path';
import { scenarioSchema, type Scenario } from '../scenario/schema.js';
import { validate } from '../scenario/load.js';
import { readScenario } from '../scenario/variants.js';
import { analyticFiles, previewDesigns, printAnalytic } from './previewAnalytic.js';
import type { DesignPreview } from '../report/previewOutputs.js';
import { candidatesOf } from '../engine/resolve.js';
import { observerFromValues } from '../fit/candidate.js';
import { observerProblems } from '../observer/observer.js';
import { buildPosteriorGrid, measurementRange } from '../observer/gridFactory.js';
import { estimateAt, motorReach } from '../observer/estimateCurve.js';
import { lineChart, type Series } from '../report/charts.js';
import { writeFolderAtomically } from '../report/writeFolder.js';
import { UserError } from './userError.js';
import { previewPage } from '../report/html/preview/previewPage.js';

export interface PreviewOptions {
  prior?: string;
  noise?: string[];
  loss?: string[];
  scale?: string;
  motorSd?: string;
  out?: string;
  json?: boolean;
  target?: string;
  /** Skip the analytic part (distinguishability, Fisher information, predicted accuracy). */
  analytic?: boolean;
}

/** "family:key=value,key=value" → { family, key: value } (numbers where numeric). */
export function parseFamilyFlag(flag: string, text: string): Record<string, unknown> {
  const [family, rest] = text.split(':', 2);
  const out: Record<string, unknown> = { family: family.trim() };
  if (rest) {
    for (const part of rest.split(',')) {
      const [k, v] = part.split('=');
      if (!k || v === undefined) throw new UserError(`--${flag} '${text}': expected family:key=value,key=value (e.g. gaussian:mean=10,sd=3)`);
      const num = Number(v);
      out[k.trim()] = v.trim() !== '' && Number.isFinite(num) ? num : v.trim();
    }
  }
  return out;
}

function scenarioFromFlags(o: PreviewOptions): unknown {
  if (!o.prior) throw new UserError('preview needs a scenario file or at least --prior, --noise and --loss');
  const [lower, upper] = (o.scale ?? '').split(',').map(Number);
  return {
    name: 'preview',
    prior: parseFamilyFlag('prior', o.prior),
    conditions: (o.noise ?? []).map((n, i) => ({ name: `condition-${i + 1}`, noise: parseFamilyFlag('noise', n) })),
    response: { lower: Number.isFinite(lower) ? lower : undefined, upper: Number.isFinite(upper) ? upper : undefined, motorSd: o.motorSd ? Number(o.motorSd) : undefined },
    models: (o.loss ?? []).map((l) => {
      const spec = parseFamilyFlag('loss', l);
      return { name: String(spec.family), loss: spec };
    }),
  };
}

export interface PreviewResult {
  scenario: Scenario;
  measurements: number[];
  /** estimates[condition][model][measurement] */
  estimates: number[][][];
  folder: string;
  /** Analytic preview of the base design and of each variant. */
  designs: DesignPreview[];
}

/** `roundOff`: magnitudes below it are floating-point residue of a zero (e.g. the centre of a symmetric prior), shown as 0. */
function pretty(x: number, roundOff = 0): string {
  if (!Number.isFinite(x)) return String(x);
  const a = Math.abs(x);
  if (a < roundOff) return '0';
  return a !== 0 && (a < 1e-3 || a >= 1e5) ? x.toExponential(3) : x.toFixed(a < 1 ? 4 : a < 100 ? 3 : 1);
}

export async function runPreview(file: string | undefined, o: PreviewOptions): Promise<PreviewResult> {
  const source = file ?? 'command line';
  const s = file ? readScenario(file) : validate(scenarioSchema, scenarioFromFlags(o), source);
  const target = o.target === undefined ? 0.8 : Number(o.target);
  if (!(target > 0 && target < 1)) throw new UserError(`--target expects a proportion between 0 and 1 (got '${o.target}')`);
  const { measurements, estimates, files } = await previewScenario(s, source);
  const designs = o.analytic === false ? [] : previewDesigns(s, source, target);
  const analytic = await analyticFiles(designs);
  const folder = o.out ?? join('results', `${s.name}-preview`);
  const page = await previewPage({ scenario: { scenario: s }, measurements, estimates, files, identical: identicalPairs(s, estimates), designs });
  writeFolderAtomically(folder, { ...files, ...analytic, 'report.html': page.html });
  return { scenario: s, measurements, estimates, folder, designs };
}

/** The preview's tables and files (loss shapes, estimate curves, estimates.csv) for a validated scenario; writes nothing. */
export async function previewScenario(s: Scenario, source: string): Promise<Omit<PreviewResult, 'scenario' | 'folder' | 'designs'> & { files: Record<string, string> }> {
  // The same construction as a recovery study's candidates, at their scenario values.
  const observers = candidatesOf(s, source).map((c) => {
    const obs = observerFromValues(c, c.base);
    const problems = observerProblems(obs);
    if (problems.length) throw new UserError(`${source}: ${problems.join('; ')}`);
    return obs;
  });
  const prior = observers[0].prior;
  const lo = prior.quantile(0.02);
  const hi = prior.quantile(0.98);
  const measurements = s.measurements ?? [0.1, 0.25, 0.5, 0.75, 0.9].map((p) => prior.quantile(p));
  const estimates: number[][][] = [];
  const curveFiles: Record<string, string> = {};
  const csv: string[] = ['condition,model,measurement,estimate'];
  for (let c = 0; c < s.conditions.length; c++) {
    const perModel: number[][] = [];
    const series: Series[] = [];
    const noise = observers[0].noise[c];
    const space = noise.space;
    // Measurements are tabulated in stimulus units; log-space noise measures log x.
    const toM = (x: number) => (space === 'log' ? Math.log(x) : x);
    const range = measurementRange(noise, lo, hi);
    const mGrid = Array.from({ length: 121 }, (_, i) => lo + ((hi - lo) * i) / 120);
    for (let k = 0; k < observers.length; k++) {
      const obs = observers[k];
      const { grid } = buildPosteriorGrid(obs.prior, obs.noise[c], range, motorReach(obs));
      let hint = NaN;
      perModel.push(measurements.map((m) => (hint = estimateAt(obs, grid, toM(m), hint))));
      hint = NaN;
      const ys = mGrid.map((m) => (hint = estimateAt(obs, grid, toM(m), hint)));
      series.push({ name: s.models[k].name, x: mGrid, y: ys });
      mGrid.forEach((m, i) => csv.push(`${s.conditions[c].name},${s.models[k].name},${m},${ys[i]}`));
    }
    estimates.push(perModel);
    curveFiles[`estimate-curves-${s.conditions[c].name}.svg`] = await lineChart({
      title: `Bayes estimate by measurement: ${s.conditions[c].name}`,
      xTitle: space === 'log' ? 'measurement (as a magnitude, e^m)' : 'measurement m',
      yTitle: 'estimate x̂(m)',
      series,
      reference: { name: 'identity', x: [lo, hi], y: [lo, hi] },
    });
  }
  // Loss shapes over errors of about ±3 noise sds at the prior's centre, scaled to a peak of 1.
  const sd0 = observers[0].noise[0].sdAt(prior.quantile(0.5)) * (observers[0].noise[0].space === 'log' ? prior.quantile(0.5) : 1);
  const errs = Array.from({ length: 201 }, (_, i) => -3 * sd0 + (6 * sd0 * i) / 200);
  const lossSeries: Series[] = observers.map((obs, k) => {
    const ys = errs.map((e) => obs.loss.loss(e));
    const top = Math.max(...ys) || 1;
    return { name: s.models[k].name, x: errs, y: ys.map((y) => y / top) };
  });
  const files: Record<string, string> = {
    'loss-shapes.svg': await lineChart({ title: 'Loss functions (scaled to 1 at the largest error shown)', xTitle: 'error (estimate − true value)', yTitle: 'relative loss', series: lossSeries }),
    ...curveFiles,
    'estimates.csv': csv.join('\n') + '\n',
  };
  return { measurements, estimates, files };
}

/** Pairs of candidate models whose estimates agree (to 1e-6 of the largest) at every tabulated measurement. */
export function identicalPairs(s: Scenario, estimates: number[][][]): [string, string][] {
  const pairs: [string, string][] = [];
  const scale = Math.max(1e-12, ...estimates.flat(2).map(Math.abs));
  for (let a = 0; a < s.models.length; a++)
    for (let b = a + 1; b < s.models.length; b++) {
      let maxDiff = 0;
      for (let c = 0; c < s.conditions.length; c++) estimates[c][a].forEach((v, i) => (maxDiff = Math.max(maxDiff, Math.abs(v - estimates[c][b][i]))));
      if (maxDiff < 1e-6 * scale) pairs.push([s.models[a].name, s.models[b].name]);
    }
  return pairs;
}

export function printPreview(r: PreviewResult): void {
  const s = r.scenario;
  console.log(`Preview of '${s.name}': Bayes estimate at selected measurements (stimulus units)\n`);
  for (let c = 0; c < s.conditions.length; c++) {
    const table = new Table({ head: [`${s.conditions[c].name}: measurement`, ...s.models.map((m) => m.name)], style: { head: [], border: [] }, chars: { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' } });
    const roundOff = 1e-12 * (s.response.upper - s.response.lower);
    r.measurements.forEach((m, i) => table.push([pretty(m, roundOff), ...s.models.map((_, k) => pretty(r.estimates[c][k][i], roundOff))]));
    console.log(table.toString());
  }
  // Say plainly when candidates agree everywhere: the design then cannot tell them apart.
  const same = identicalPairs(s, r.estimates).map(([a, b]) => `${a} and ${b}`);
  if (same.length) {
    console.log(`\nIdentical estimates under this design at these parameter values: ${same.join('; ')}.`);
    console.log('Distinct families that coincide here cannot be told apart by any number of trials; a family containing another (power contains squared at exponent 2 and absolute at exponent 1) coincides with it at that value and is told apart only where its parameter differs.');
  }
  printAnalytic(r.designs);
  console.log(`\nFigures, estimates.csv${r.designs.length ? ', preview.json and the analytic CSV files' : ''} written to ${r.folder}/`);
  console.log(`Report: ${join(r.folder, 'report.html')}`);
}
