/**
 * SVG figures rendered in Node by Vega-Lite compiled to Vega (no browser).
 * One house style for every figure: the Okabe–Ito colour-blind-safe palette,
 * a light grid and a plain sans-serif face.
 */
import * as vega from 'vega';
import * as vl from 'vega-lite';

export const PALETTE = ['#0072B2', '#D55E00', '#009E73', '#CC79A7', '#E69F00', '#56B4E9', '#F0E442', '#000000'];

const houseConfig = {
  font: 'DejaVu Sans, Helvetica, Arial, sans-serif',
  background: '#ffffff',
  view: { stroke: '#c9c9c9' },
  axis: { gridColor: '#ececec', domainColor: '#8a8a8a', tickColor: '#8a8a8a', labelColor: '#333333', titleColor: '#222222', titleFontWeight: 'normal' },
  legend: { labelColor: '#333333', titleColor: '#222222', titleFontWeight: 'normal' },
  title: { anchor: 'start', fontWeight: 'bold', color: '#1b1b1b', fontSize: 14 },
  range: { category: PALETTE },
};

export async function renderSvg(spec: Record<string, unknown>): Promise<string> {
  // A figure may refine the house style (e.g. no grid in a matrix); its config is merged key by key.
  const own = (spec.config ?? {}) as Record<string, Record<string, unknown>>;
  const config: Record<string, unknown> = { ...houseConfig };
  for (const [k, v] of Object.entries(own)) config[k] = { ...((houseConfig as Record<string, unknown>)[k] as object), ...v };
  const full = { $schema: 'https://vega.github.io/schema/vega-lite/v5.json', ...spec, config };
  const compiled = vl.compile(full as unknown as vl.TopLevelSpec).spec;
  const view = new vega.View(vega.parse(compiled), { renderer: 'none' });
  const svg = await view.toSVG();
  view.finalize();
  return svg;
}

export interface Series {
  name: string;
  x: number[];
  y: number[];
}

/** Line chart of several named series. */
export async function lineChart(opts: { title: string; xTitle: string; yTitle: string; series: Series[]; reference?: Series; width?: number; height?: number }): Promise<string> {
  const values: { series: string; x: number; y: number }[] = [];
  for (const s of opts.series) s.x.forEach((x, i) => Number.isFinite(s.y[i]) && values.push({ series: s.name, x, y: s.y[i] }));
  const layers: Record<string, unknown>[] = [
    {
      mark: { type: 'line', strokeWidth: 2, clip: true },
      encoding: {
        x: { field: 'x', type: 'quantitative', title: opts.xTitle, scale: { zero: false } },
        y: { field: 'y', type: 'quantitative', title: opts.yTitle, scale: { zero: false } },
        // Colour and dash share field, title and domain, so the one legend shows both (readable in grey print too).
        color: { field: 'series', type: 'nominal', title: null, scale: { domain: opts.series.map((s) => s.name) } },
        strokeDash: { field: 'series', type: 'nominal', title: null, scale: { domain: opts.series.map((s) => s.name) } },
      },
    },
  ];
  if (opts.reference) {
    const ref = opts.reference;
    layers.unshift({
      data: { values: ref.x.map((x, i) => ({ x, y: ref.y[i] })) },
      mark: { type: 'line', color: '#9a9a9a', strokeWidth: 1, strokeDash: [2, 3] },
      encoding: { x: { field: 'x', type: 'quantitative' }, y: { field: 'y', type: 'quantitative' } },
    });
  }
  return renderSvg({
    title: opts.title,
    width: opts.width ?? 480,
    height: opts.height ?? 300,
    data: { values },
    layer: layers,
  });
}
