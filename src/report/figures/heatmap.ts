/**
 * Matrix figures (confusion, inversion, trade-off): coloured cells with the
 * value printed in each, so the figure is read without a legend. Colours are
 * computed here and passed to Vega-Lite as literal fills (scale: null),
 * which lets one matrix hold columns of different meaning (a blue ramp for
 * models chosen, grey for undecided, vermillion for failed fits) and a
 * diverging ramp for correlations.
 */
import { renderSvg } from '../charts.js';

export type Ramp = 'blue' | 'grey' | 'vermillion' | 'diverging';

type Rgb = [number, number, number];
const hex = (c: Rgb) => '#' + c.map((v) => Math.round(v).toString(16).padStart(2, '0')).join('');
const mix = (a: Rgb, b: Rgb, t: number): Rgb => [0, 1, 2].map((k) => a[k] + (b[k] - a[k]) * t) as Rgb;

// End points derived from the Okabe–Ito blue (#0072B2) and vermillion (#D55E00), darkened for contrast.
const PAPER: Rgb = [247, 247, 244];
const ENDS: Record<Exclude<Ramp, 'diverging'>, Rgb> = { blue: [12, 76, 128], grey: [96, 96, 96], vermillion: [170, 72, 0] };

/** Fill for a value in [0, 1] (or [−1, 1] for 'diverging'); missing values get a hatched-looking pale grey. */
export function cellFill(value: number | null, ramp: Ramp): string {
  if (value === null || !Number.isFinite(value)) return '#eeeeee';
  if (ramp === 'diverging') {
    const t = Math.max(-1, Math.min(1, value));
    return hex(t < 0 ? mix(PAPER, ENDS.blue, -t) : mix(PAPER, ENDS.vermillion, t));
  }
  return hex(mix(PAPER, ENDS[ramp], Math.max(0, Math.min(1, value))));
}

/** Dark text on light cells, white on dark ones (relative luminance, WCAG 2 definition). */
export function textOn(fill: string): string {
  const lin = (v: number) => (v <= 0.03928 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);
  const [r, g, b] = [1, 3, 5].map((i) => lin(parseInt(fill.slice(i, i + 2), 16) / 255));
  return 0.2126 * r + 0.7152 * g + 0.0722 * b < 0.3 ? '#ffffff' : '#1b1b1b';
}

export interface HeatCell {
  row: string;
  column: string;
  value: number | null;
  /** The printed text: always a formatNumber result. */
  label: string;
  ramp: Ramp;
}

/** `compact`: small cells and upright column labels, for matrices shown side by side. */
export async function heatmap(opts: { title: string; subtitle?: string; rows: string[]; columns: string[]; rowTitle: string; columnTitle: string; cells: HeatCell[]; cell?: number; compact?: boolean }): Promise<string> {
  const longest = Math.max(...opts.columns.map((c) => c.length));
  // Wide enough for horizontal column labels up to about 13 characters; longer names are set vertically (slanted ones would run past the right edge).
  const slant = longest > 13 || opts.compact === true;
  const size = opts.cell ?? (opts.compact ? 46 : slant ? 60 : Math.max(58, Math.min(92, longest * 6.6 + 14)));
  const values = opts.cells.map((c) => {
    const fill = cellFill(c.value, c.ramp);
    return { row: c.row, column: c.column, label: c.label, fill, ink: textOn(fill) };
  });
  return renderSvg({
    title: opts.subtitle ? { text: opts.title, subtitle: opts.subtitle, subtitleColor: '#555555', subtitleFontSize: 11 } : opts.title,
    width: size * opts.columns.length,
    height: size * 0.72 * opts.rows.length,
    data: { values },
    encoding: {
      x: { field: 'column', type: 'nominal', sort: opts.columns, title: opts.columnTitle, axis: { orient: 'top', labelAngle: slant ? -90 : 0, labelAlign: slant ? 'left' : 'center', labelBaseline: slant ? 'middle' : 'bottom', domain: false, ticks: false, labelPadding: 6, labelFontSize: 11 } },
      y: { field: 'row', type: 'nominal', sort: opts.rows, title: opts.rowTitle, axis: { domain: false, ticks: false, labelPadding: 6, labelFontSize: 11 } },
    },
    layer: [
      { mark: { type: 'rect', stroke: '#ffffff', strokeWidth: 2 }, encoding: { fill: { field: 'fill', type: 'nominal', scale: null } } },
      { mark: { type: 'text', fontSize: opts.compact ? 11 : 12, fontWeight: 'bold' }, encoding: { text: { field: 'label' }, color: { field: 'ink', type: 'nominal', scale: null } } },
    ],
    config: { view: { stroke: null }, axis: { grid: false } },
  });
}
