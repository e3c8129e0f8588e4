/**
 * Trial-count sweep: recovery rate against trials per observer, per
 * generating model and over all models, with 95% Wilson bands and the
 * target line; the same numbers as a table.
 */
import type { Section } from '../section.js';
import { formatNumber } from '../../format.js';
import { ALL_MODELS as ALL, trialCurves, type CurvePoint } from '../../figures/trialCurves.js';
import { trialCountsOf, isRecoveryFolder } from '../data.js';

export const trialSweep: Section = {
  id: 'trial-sweep',
  title: 'Trials needed',
  applies: (d) => isRecoveryFolder(d) && !!d.summary.byTrials && Object.keys(d.summary.byTrials).length > 1,
  async render(ctx) {
    const byTrials = ctx.data.summary.byTrials!;
    const counts = trialCountsOf(ctx.data.summary);
    const rows = ctx.data.summary.overall.confusion.rows;
    const points: CurvePoint[] = [];
    const series: string[] = [];
    rows.forEach((g) => {
      const withDiagonal = counts.some((t) => byTrials[String(t)].confusion.recovered[byTrials[String(t)].confusion.rows.indexOf(g)]);
      if (withDiagonal) series.push(g);
    });
    series.push(ALL);
    for (const t of counts) {
      const s = byTrials[String(t)];
      for (const g of series) {
        const p = g === ALL ? s.accuracy : s.confusion.recovered[s.confusion.rows.indexOf(g)];
        if (p) points.push({ series: g, trials: t, estimate: p.estimate, lower: p.lower, upper: p.upper });
      }
    }
    const target = ctx.data.settings.target;
    const svg = await trialCurves({ title: 'Recovery rate by trials per observer', series, points, target, targetLabel: `target ${formatNumber(target, 'percent')}`, trials: counts });
    const head = `<tr><th>trials per observer</th>${series.map((g) => `<th>${ctx.name(g)}</th>`).join('')}</tr>`;
    const body = counts
      .map((t) => {
        const base = ['summary', 'byTrials', String(t)];
        const s = byTrials[String(t)];
        const cells = series.map((g) => {
          const i = s.confusion.rows.indexOf(g);
          const path = g === ALL ? [...base, 'accuracy'] : [...base, 'confusion', 'recovered', i];
          if (g !== ALL && !s.confusion.recovered[i]) return '<td>–</td>';
          return `<td>${ctx.num([...path, 'estimate'], 'percent')} <span class="ci">${ctx.num([...path, 'lower'], 'percent')}–${ctx.num([...path, 'upper'], 'percent')}</span></td>`;
        });
        return `<tr><th>${ctx.num([...base, 'trials', 0], 'count')}</th>${cells.join('')}</tr>`;
      })
      .join('\n');
    const fromSizing = typeof ctx.data.summary.sizing?.target === 'number';
    return `<p class="how">The same synthetic observers were analysed at each trial count (smaller counts are the first trials of the larger ones), so the curves compare like with like. Bands are 95% Wilson intervals; the dashed line is the target of ${ctx.num(['report', 'target'], 'percent')}${fromSizing ? ' set for sizing' : ' (a common choice; <code>lossprobe size</code> lets you set another)'}.</p>
<div class="figs">
${ctx.figure('trial-curves.svg', svg, 'Share of datasets in which the generating model was chosen, by trials per observer: one panel per generating model, the last pooling all of them. Shaded: 95% interval.', 'Recovery rate against trial count')}
<div class="table-wrap"><table class="data"><caption>Recovery rate with its 95% interval</caption><thead>${head}</thead><tbody>
${body}
</tbody></table></div>
</div>`;
  },
};
