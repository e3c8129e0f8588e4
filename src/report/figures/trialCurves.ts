/**
 * Trial-count curves: recovery rate against trials per observer, one line
 * per series with its 95% interval as a band, and the target as a dashed
 * rule. Trials go on a log axis (sweeps usually double the count).
 */
import { renderSvg, PALETTE } from '../charts.js';

export interface CurvePoint {
  series: string;
  trials: number;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
}

export async function trialCurves(opts: { title: string; subtitle?: string; series: string[]; points: CurvePoint[]; target: number; targetLabel: string; trials: number[] }): Promise<string> {
  const values = opts.points.filter((p) => p.estimate !== null);
  const colours = opts.series.map((s, i) => (s === 'all models' ? '#1b1b1b' : PALETTE[i % (PALETTE.length - 1)]));
  const colour = { field: 'series', type: 'nominal', title: null, scale: { domain: opts.series, range: colours }, legend: { orient: 'right' } };
  const x = { field: 'trials', type: 'quantitative', title: 'trials per observer', scale: { type: 'log', domain: [opts.trials[0] / 1.15, opts.trials[opts.trials.length - 1] * 1.15], nice: false }, axis: { values: opts.trials, format: 'd' } };
  return renderSvg({
    title: opts.subtitle ? { text: opts.title, subtitle: opts.subtitle, subtitleColor: '#555555' } : opts.title,
    width: 460,
    height: 280,
    layer: [
      { data: { values }, mark: { type: 'area', opacity: 0.14 }, encoding: { x, y: { field: 'lower', type: 'quantitative' }, y2: { field: 'upper' }, color: colour } },
      {
        data: { values },
        mark: { type: 'line', strokeWidth: 2, point: { size: 36, filled: true } },
        encoding: { x, y: { field: 'estimate', type: 'quantitative', title: 'generating model chosen', scale: { domain: [0, 1] }, axis: { format: '.0%' } }, color: colour, strokeDash: { field: 'series', type: 'nominal', title: null, legend: { orient: 'right' }, scale: { domain: opts.series, range: opts.series.map((s) => (s === 'all models' ? [5, 3] : [1, 0])) } } },
      },
      { data: { values: [{ y: opts.target, label: opts.targetLabel }] }, mark: { type: 'rule', color: '#7a7a7a', strokeDash: [2, 3] }, encoding: { y: { field: 'y', type: 'quantitative' } } },
      { data: { values: [{ y: opts.target, label: opts.targetLabel }] }, mark: { type: 'text', align: 'left', dx: 4, dy: -7, color: '#555555', fontSize: 11 }, encoding: { y: { field: 'y', type: 'quantitative' }, x: { datum: opts.trials[0] / 1.15, type: 'quantitative' }, text: { field: 'label' } } },
    ],
  });
}
