/**
 * Confusion matrix (P(chosen | generating), with undecided and failed-fit
 * columns so no dataset disappears) and inversion matrix (P(generating |
 * chosen)) as heatmaps with the numbers in the cells.
 */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';
import type { ReportContext } from '../context.js';
import { focusOf, type Focus } from '../focus.js';
import { formatNumber } from '../../format.js';
import { heatmap, type HeatCell } from '../../figures/heatmap.js';
import { listNames } from '../sentences.js';

export const UNDECIDED = 'undecided';
export const FAILED = 'failed fit';

/** Confusion heatmap of one summary; shared with the design-variants section. */
export async function confusionFigure(ctx: ReportContext, f: Focus, file: string, title: string, compact = false): Promise<string> {
  const c = f.summary.confusion;
  const rowLabel = (i: number) => `${c.rows[i]} (n = ${formatNumber(c.n[i], 'count')})`;
  const rows = c.rows.map((_, i) => rowLabel(i));
  const cells: HeatCell[] = [];
  c.rows.forEach((_, i) => {
    c.columns.forEach((col, j) => cells.push({ row: rows[i], column: col, value: c.rate[i][j], label: formatNumber(c.rate[i][j], 'percent'), ramp: 'blue' }));
    cells.push({ row: rows[i], column: UNDECIDED, value: c.undecidedRate[i], label: formatNumber(c.undecidedRate[i], 'percent'), ramp: 'grey' });
    cells.push({ row: rows[i], column: FAILED, value: c.failedRate[i], label: formatNumber(c.failedRate[i], 'percent'), ramp: 'vermillion' });
  });
  const svg = await heatmap({ title, rows, columns: [...c.columns, UNDECIDED, FAILED], rowTitle: 'generating model', columnTitle: 'model chosen', cells, compact });
  if (compact) return ctx.figure(file, svg, `Confusion matrix ${f.phrase}; rows add up to the whole.`, 'Confusion matrix heatmap');
  return ctx.figure(
    file,
    svg,
    `Confusion matrix ${f.phrase}. Each row is a generating model and adds up to the whole across all columns: the share of its datasets won by each candidate, left undecided (criterion difference within the margin, or a tie), or lost to a failed fit. The diagonal is the recovery rate.`,
    'Confusion matrix heatmap',
  );
}

async function inversionFigure(ctx: ReportContext, f: Focus): Promise<string> {
  const inv = f.summary.inversion;
  const cells: HeatCell[] = [];
  inv.rows.forEach((r, i) => inv.columns.forEach((col, j) => cells.push({ row: r, column: col, value: inv.rate[i][j], label: formatNumber(inv.rate[i][j], 'percent'), ramp: 'blue' })));
  const svg = await heatmap({ title: 'P(generating | chosen)', rows: inv.rows, columns: inv.columns, rowTitle: 'generating model', columnTitle: 'model chosen', cells });
  return ctx.figure(
    'inversion.svg',
    svg,
    `Inversion matrix ${f.phrase}: each column adds up to the whole and gives the probability of each generating model when the column's model was chosen, with every generating model equally likely beforehand. A column never chosen is shown as –.`,
    'Inversion matrix heatmap',
  );
}

/** Which models the undecided datasets could not separate, row by row (the matrix shows only how many). */
function tieList(ctx: ReportContext, f: Focus): string {
  const c = f.summary.confusion;
  const items = c.rows.flatMap((g, i) =>
    c.ties[i]?.length
      ? [`<li>${ctx.name(g)}: ${c.ties[i].map((t, k) => `${listNames(ctx, t.contenders)} in ${ctx.num([...f.path, 'confusion', 'ties', i, k, 'rate'], 'percent')}`).join('; ')}</li>`]
      : [],
  );
  return items.length ? `<p class="how">Undecided datasets, by the models the criterion could not separate (share of the row's datasets):</p>\n<ul class="ties">\n${items.join('\n')}\n</ul>` : '';
}

export const modelRecovery: Section = {
  id: 'model-recovery',
  title: 'Model recovery',
  applies: (d) => isRecoveryFolder(d) && d.summary.overall.confusion.rows.length > 0,
  async render(ctx) {
    const f = focusOf(ctx);
    const crit = ctx.data.summary.criterion.toUpperCase();
    return `<p class="how">Every synthetic dataset was fitted by every candidate model and the model with the best ${crit} was chosen. A design separates the models when the confusion matrix is concentrated on its diagonal.</p>
<div class="figs">
${await confusionFigure(ctx, f, 'confusion.svg', 'P(chosen | generating)')}
${await inversionFigure(ctx, f)}
</div>
${tieList(ctx, f)}`;
  },
};
