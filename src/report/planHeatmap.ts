/**
 * Heatmap of P(correct group conclusion) over participants × trials, with
 * the target contour: the boundary between cells that reach the target and
 * cells that do not, drawn along cell edges. Cells sit at their grid index
 * (evenly spaced whatever the counts), labelled with the counts themselves.
 * Colour: viridis, a perceptually uniform scale readable with colour-vision
 * deficiencies (van der Walt & Smith 2015, matplotlib's default colormap).
 */
import type { GridCell } from '../analysis/planGrid.js';
import { renderSvg } from './charts.js';
import { percentNear } from './planSummary.js';

interface Segment {
  x: number;
  y: number;
  x2: number;
  y2: number;
}

/** Cell edges between a reaching cell and a non-reaching neighbour, in index coordinates. */
export function targetContour(reaches: boolean[][]): Segment[] {
  const out: Segment[] = [];
  const rows = reaches.length;
  for (let r = 0; r < rows; r++)
    for (let c = 0; c < reaches[r].length; c++) {
      if (!reaches[r][c]) continue;
      if (c + 1 < reaches[r].length && !reaches[r][c + 1]) out.push({ x: c + 0.5, y: r - 0.5, x2: c + 0.5, y2: r + 0.5 });
      if (c > 0 && !reaches[r][c - 1]) out.push({ x: c - 0.5, y: r - 0.5, x2: c - 0.5, y2: r + 0.5 });
      if (r + 1 < rows && !reaches[r + 1][c]) out.push({ x: c - 0.5, y: r + 0.5, x2: c + 0.5, y2: r + 0.5 });
      if (r > 0 && !reaches[r - 1][c]) out.push({ x: c - 0.5, y: r - 0.5, x2: c + 0.5, y2: r - 0.5 });
    }
  return out;
}

/** `label` formats P(correct) for the cells and the target (default: whole percent, one decimal near the target). */
export async function planHeatmap(cells: readonly GridCell[], target: number, title: string, label: (p: number) => string = (p) => percentNear(p, target)): Promise<string> {
  const ns = [...new Set(cells.map((c) => c.participants))].sort((a, b) => a - b);
  const ts = [...new Set(cells.map((c) => c.trials))].sort((a, b) => a - b);
  const values = cells.map((c) => {
    const x = ts.indexOf(c.trials);
    const y = ns.indexOf(c.participants);
    const p = c.correct.estimate;
    return { x0: x - 0.5, x1: x + 0.5, y0: y - 0.5, y1: y + 0.5, x, y, p, label: label(p), dark: p < 0.6 };
  });
  const reaches = ns.map((n) => ts.map((t) => cells.some((c) => c.participants === n && c.trials === t && c.correct.estimate >= target)));
  const contour = targetContour(reaches);
  const axis = (labels: number[], title: string) => ({
    title,
    values: labels.map((_, i) => i),
    labelExpr: `${JSON.stringify(labels.map(String))}[datum.value]`,
    grid: false,
    tickCount: labels.length,
  });
  const xScale = { domain: [-0.5, ts.length - 0.5], nice: false, zero: false };
  const yScale = { domain: [-0.5, ns.length - 0.5], nice: false, zero: false };
  const everywhere = reaches.every((r) => r.every(Boolean));
  const nowhere = reaches.every((r) => r.every((v) => !v));
  const goal = label(target);
  const subtitle = nowhere ? `no cell reaches the target ${goal}` : everywhere ? `every cell reaches the target ${goal}` : `red-orange line: boundary of the cells reaching the target ${goal}`;
  const layers: Record<string, unknown>[] = [
    {
      mark: { type: 'rect', stroke: '#ffffff', strokeWidth: 1 },
      encoding: {
        x: { field: 'x0', type: 'quantitative', scale: xScale, axis: axis(ts, 'trials per participant') },
        x2: { field: 'x1' },
        y: { field: 'y0', type: 'quantitative', scale: yScale, axis: axis(ns, 'participants') },
        y2: { field: 'y1' },
        color: { field: 'p', type: 'quantitative', title: 'P(correct)', scale: { domain: [0, 1], scheme: 'viridis' }, legend: { format: '.0%' } },
      },
    },
    {
      mark: { type: 'text', fontSize: 12 },
      encoding: {
        x: { field: 'x', type: 'quantitative', scale: xScale },
        y: { field: 'y', type: 'quantitative', scale: yScale },
        text: { field: 'label' },
        color: { condition: { test: 'datum.dark', value: '#ffffff' }, value: '#1b1b1b' },
      },
    },
  ];
  if (contour.length)
    layers.push({
      data: { values: contour },
      mark: { type: 'rule', color: '#D55E00', strokeWidth: 4, strokeCap: 'round' },
      encoding: { x: { field: 'x', type: 'quantitative', scale: xScale }, y: { field: 'y', type: 'quantitative', scale: yScale }, x2: { field: 'x2' }, y2: { field: 'y2' } },
    });
  return renderSvg({
    title: { text: title, subtitle },
    width: Math.max(240, 70 * ts.length),
    height: Math.max(180, 40 * ns.length),
    data: { values },
    layer: layers,
  });
}
