/**
 * Trial-count curves: recovery rate against trials per observer, one small
 * panel per series (generating models, then all models pooled) so bands
 * never pile up, each with its 95% interval band and the target as a dashed
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

export const ALL_MODELS = 'all models';

export async function trialCurves(opts: { title: string; series: string[]; points: CurvePoint[]; target: number; targetLabel: string; trials: number[] }): Promise<string> {
  const values = opts.points.filter((p) => p.estimate !== null);
  const colours = opts.series.map((s, i) => (s === ALL_MODELS ? '#1b1b1b' : PALETTE[i % (PALETTE.length - 1)]));
  const colour = { field: 'series', type: 'nominal', scale: { domain: opts.series, range: colours }, legend: null };
  const lo = opts.trials[0] / 1.2;
  const hi = opts.trials[opts.trials.length - 1] * 1.2;
  const x = { field: 'trials', type: 'quantitative', title: 'trials per observer', scale: { type: 'log', domain: [lo, hi], nice: false }, axis: { values: opts.trials, format: 'd', grid: false } };
  const y = { field: 'estimate', type: 'quantitative', title: 'generating model chosen', scale: { domain: [0, 1] }, axis: { format: '.0%', tickCount: 5 } };
  return renderSvg({
    title: opts.title,
    data: { values },
    facet: { field: 'series', type: 'nominal', sort: opts.series, title: null, header: { labelFontSize: 12, labelFontWeight: 'bold', labelColor: '#222222', labelAnchor: 'start' } },
    columns: Math.min(4, opts.series.length),
    spec: {
      width: 190,
      height: 150,
      layer: [
        { mark: { type: 'area', opacity: 0.18 }, encoding: { x, y: { field: 'lower', type: 'quantitative' }, y2: { field: 'upper' }, color: colour } },
        { mark: { type: 'rule', color: '#8a8a8a', strokeDash: [3, 3] }, encoding: { y: { datum: opts.target } } },
        { mark: { type: 'text', align: 'right', baseline: 'bottom', dy: -2, color: '#666666', fontSize: 10, text: opts.targetLabel }, encoding: { y: { datum: opts.target }, x: { datum: hi, type: 'quantitative' } } },
        { mark: { type: 'line', strokeWidth: 2, point: { size: 30, filled: true } }, encoding: { x, y, color: colour } },
      ],
    },
    resolve: { scale: { x: 'shared', y: 'shared' } },
    config: { view: { stroke: '#d8d8d8' } },
  });
}
