/** Tidy CSV files of a trial-count sweep (see analysis/sizing.ts for the numbers). */
import type { Sizing } from '../analysis/sizing.js';
import { csvTable } from './csv.js';
import { lineChart, type Series } from './charts.js';

export interface SizedDesign {
  variant: string;
  folder: string;
  sizing: Sizing;
  /** The design's recovery summary over all its jobs. */
  overall?: unknown;
}

/** One row per (target, generating model, trial count). */
export function sizingCsv(s: Sizing): string {
  const rows: unknown[][] = [];
  const add = (target: string, points: Sizing['points']) => {
    for (const p of points)
      rows.push([
        target, p.generating, p.trials, p.observers, p.successes, p.failed, p.rate, p.lower, p.upper, p.simultaneousLower, p.simultaneousUpper, p.wilsonLower, p.wilsonUpper, p.fitted,
        target === 'model' ? (s.predicted?.points.find((q) => q.generating === p.generating && q.trials === p.trials)?.p ?? null) : null,
      ]);
  };
  add('model', s.points);
  if (s.parameter) add(`parameter:${s.parameter.name}`, s.parameter.points);
  return csvTable(['target', 'generating', 'trials', 'observers', 'successes', 'failed', 'rate', 'lower_95', 'upper_95', 'lower_simultaneous', 'upper_simultaneous', 'wilson_lower', 'wilson_upper', 'monotone_fit', 'predicted_analytic'], rows);
}

/** One row per (target, generating model): the smallest trial count reaching the target. */
export function sizingNeededCsv(s: Sizing): string {
  const rows: unknown[][] = [];
  for (const n of [...s.needed, s.neededAll]) rows.push(['model', n.generating, s.target, n.trials, n.lower, n.upper]);
  if (s.parameter) for (const n of [...s.parameter.needed, s.parameter.neededAll]) rows.push([`parameter:${s.parameter.name}`, n.generating, s.target, n.trials, n.lower, n.upper]);
  return csvTable(['target', 'generating', 'target_rate', 'trials_needed', 'above', 'at_most'], rows);
}

export function sizingDesignsCsv(ranking: { variant: string; trials: number | null; lower: number | null; upper: number | null; byModel: Record<string, number | null> }[]): string {
  const rows: unknown[][] = [];
  ranking.forEach((r, i) => {
    rows.push([i + 1, r.variant, 'every generating model', r.trials, r.lower, r.upper]);
    for (const [m, t] of Object.entries(r.byModel)) rows.push([i + 1, r.variant, m, t, null, null]);
  });
  return csvTable(['rank', 'design', 'generating', 'trials_needed', 'above', 'at_most'], rows);
}

/** Accuracy against log10 trials per generating model: observed, monotone fit and (dashed by series) the analytic prediction. */
export async function sizingFigure(s: Sizing): Promise<string> {
  const series: Series[] = [];
  for (const g of [...new Set(s.points.map((p) => p.generating))]) {
    const pts = s.points.filter((p) => p.generating === g && p.rate !== null);
    series.push({ name: `${g} observed`, x: pts.map((p) => Math.log10(p.trials)), y: pts.map((p) => p.rate!) });
    series.push({ name: `${g} monotone fit`, x: pts.map((p) => Math.log10(p.trials)), y: pts.map((p) => p.fitted ?? NaN) });
    const pred = (s.predicted?.points ?? []).filter((p) => p.generating === g);
    if (pred.length) series.push({ name: `${g} predicted`, x: pred.map((p) => Math.log10(p.trials)), y: pred.map((p) => p.p) });
  }
  const xs = s.trialCounts.map((t) => Math.log10(t));
  return lineChart({
    title: 'Share of datasets whose generating model was chosen, by trial count',
    xTitle: 'log10(trials per observer)',
    yTitle: 'accuracy',
    series,
    reference: { name: 'target', x: [Math.min(...xs), Math.max(...xs)], y: [s.target, s.target] },
  });
}
