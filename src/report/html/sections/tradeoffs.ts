/**
 * Trade-offs: correlations of estimation errors between the parameters of
 * each generating model's own fit (in the fitted, transformed space). A
 * strong correlation marks a ridge: the data let one parameter stand in for
 * another.
 */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';
import { slug } from '../context.js';
import { focusOf } from '../focus.js';
import { formatNumber } from '../../format.js';
import { heatmap, type HeatCell } from '../../figures/heatmap.js';

export const tradeoffs: Section = {
  id: 'tradeoffs',
  title: 'Parameter trade-offs',
  applies: (d) => isRecoveryFolder(d) && d.summary.overall.tradeoffs.some((t) => t.parameters.length > 1),
  async render(ctx) {
    const f = focusOf(ctx);
    const figs: string[] = [];
    for (const t of f.summary.tradeoffs) {
      if (t.parameters.length < 2) continue;
      const cells: HeatCell[] = [];
      t.parameters.forEach((a, i) =>
        t.parameters.forEach((b, j) => cells.push({ row: a, column: b, value: i === j ? null : t.correlation[i][j], label: i === j ? '' : formatNumber(t.correlation[i][j], 'correlation'), ramp: 'diverging' })),
      );
      const svg = await heatmap({ title: t.generating, rows: t.parameters, columns: t.parameters, rowTitle: '', columnTitle: '', cells });
      figs.push(ctx.figure(`tradeoff-${slug(t.generating)}.svg`, svg, `Correlation of estimation errors between the parameters of ${ctx.name(t.generating)}.`, `Trade-off matrix of ${t.generating}`));
    }
    return `<p class="how">Each cell is the correlation, across synthetic observers, of the errors (fitted minus true, in the fitting space) of two parameters, ${f.phrase}. Blue: when one is overestimated the other tends to be underestimated; vermillion: both err together. Values near plus or minus one mean the design cannot tell the two apart.</p>
<div class="figs">
${figs.join('\n')}
</div>`;
  },
};
