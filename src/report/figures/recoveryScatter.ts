/**
 * Parameter recovery: fitted against true value for one parameter, points
 * coloured (and shaped, for print) by generating model, with the identity
 * line. Both axes share one range so distance from the line reads as error.
 */
import { renderSvg, PALETTE } from '../charts.js';

export interface RecoveryDot {
  model: string;
  truth: number;
  fitted: number;
}

const SHAPES = ['circle', 'square', 'triangle-up', 'diamond', 'cross', 'triangle-down', 'circle', 'square'];

export async function recoveryScatter(opts: { title: string; subtitle: string[]; models: string[]; dots: RecoveryDot[] }): Promise<string> {
  const all = opts.dots.flatMap((d) => [d.truth, d.fitted]);
  let lo = Math.min(...all);
  let hi = Math.max(...all);
  if (!(hi > lo)) [lo, hi] = [lo - 1, hi + 1];
  const pad = (hi - lo) * 0.05;
  const domain = [lo - pad, hi + pad];
  // Colour and shape share one field, title and legend, so Vega-Lite draws a single legend of coloured shapes.
  // Colours stay fixed across panels (domain: every model); the legend lists only the models drawn here.
  const present = opts.models.filter((m) => opts.dots.some((d) => d.model === m));
  const legend = { orient: 'bottom', direction: 'horizontal', labelFontSize: 10, columnPadding: 6, symbolSize: 40, offset: 8, columns: 2, values: present };
  const colour = { field: 'model', type: 'nominal', title: null, scale: { domain: opts.models, range: opts.models.map((_, i) => PALETTE[i % PALETTE.length]) }, legend };
  const shape = { field: 'model', type: 'nominal', title: null, scale: { domain: opts.models, range: opts.models.map((_, i) => SHAPES[i % SHAPES.length]) }, legend };
  return renderSvg({
    title: { text: opts.title, subtitle: opts.subtitle, subtitleColor: '#444444', subtitleFontSize: 10, subtitlePadding: 4, subtitleLineHeight: 13 },
    width: 220,
    height: 220,
    layer: [
      { data: { values: [{ v: domain[0] }, { v: domain[1] }] }, mark: { type: 'line', color: '#9a9a9a', strokeDash: [4, 3], strokeWidth: 1 }, encoding: { x: { field: 'v', type: 'quantitative', scale: { domain, nice: false, zero: false } }, y: { field: 'v', type: 'quantitative', scale: { domain, nice: false, zero: false } } } },
      {
        data: { values: opts.dots },
        mark: { type: 'point', filled: true, size: 46, opacity: 0.8 },
        encoding: {
          x: { field: 'truth', type: 'quantitative', title: 'true value', scale: { domain, nice: false, zero: false } },
          y: { field: 'fitted', type: 'quantitative', title: 'fitted value', scale: { domain, nice: false, zero: false } },
          color: colour,
          shape,
        },
      },
    ],
  });
}
