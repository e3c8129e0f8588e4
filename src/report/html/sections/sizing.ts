/**
 * The adaptive trial-count sweep (`lossprobe size`), when summary.json has a
 * `sizing` object (shape in DEVELOPERS.md): the trials each generating model
 * needs with their intervals, accuracy per point with its anytime-valid
 * interval and observers used, the rule that spent them, the monotonicity
 * check and the analytic prediction beside the simulation.
 */
import type { Section } from '../section.js';
import type { Sizing } from '../../../analysis/sizing.js';
import { sizingFigure } from '../../sizingOutputs.js';

const sizingOf = (d: { summary: { sizing?: unknown } }) => d.summary.sizing as Sizing | undefined;

export const sizingSection: Section = {
  id: 'sizing',
  title: 'Trials needed: adaptive sweep',
  applies: (d) => Array.isArray(sizingOf(d)?.points) && Array.isArray(sizingOf(d)?.needed),
  async render(ctx) {
    const s = sizingOf(ctx.data)!;
    const base = ['summary', 'sizing'];
    const gens = [...new Set(s.points.map((p) => p.generating))];
    const needRow = (path: (string | number)[], label: string, n: Sizing['needed'][number]) =>
      `<tr><th>${label}</th><td>${n.trials === null ? 'none in range' : ctx.num([...path, 'trials'], 'count')}</td><td>${n.lower === null ? `at or below ${ctx.num([...base, 'trialCounts', 0], 'count')}` : `above ${ctx.num([...path, 'lower'], 'count')}`}, ${
        n.upper === null ? `possibly beyond ${ctx.num([...base, 'trialCounts', s.trialCounts.length - 1], 'count')}` : `at most ${ctx.num([...path, 'upper'], 'count')}`
      }</td>${s.predicted ? `<td>${s.predicted.trialsNeeded[n.generating] === undefined || s.predicted.trialsNeeded[n.generating] === null ? '–' : ctx.num([...base, 'predicted', 'trialsNeeded', n.generating], 'count')}</td>` : ''}</tr>`;
    const needed = [...s.needed.map((n, i) => needRow([...base, 'needed', i], ctx.name(n.generating), n)), needRow([...base, 'neededAll'], 'every generating model', s.neededAll)].join('\n');
    const pointRows = s.trialCounts
      .map((t) => {
        const cells = gens.map((g) => {
          const i = s.points.findIndex((p) => p.generating === g && p.trials === t);
          const p = [...base, 'points', i];
          return `<td>${ctx.num([...p, 'rate'], 'percent')} <span class="ci">${ctx.num([...p, 'lower'], 'percent')}–${ctx.num([...p, 'upper'], 'percent')}</span> <span class="ci">n=${ctx.num([...p, 'observers'], 'count')}</span></td>`;
        });
        return `<tr><th>${ctx.num([...base, 'trialCounts', s.trialCounts.indexOf(t)], 'count')}</th>${cells.join('')}</tr>`;
      })
      .join('\n');
    const falls = s.monotonicity.falls.length
      ? `<p class="warn">Accuracy fell between successive trial counts beyond chance for ${s.monotonicity.falls
          .map((f, i) => `${ctx.name(f.generating)} (${ctx.num([...base, 'monotonicity', 'falls', i, 'from'], 'count')} → ${ctx.num([...base, 'monotonicity', 'falls', i, 'to'], 'count')})`)
          .join(', ')}; check the fits.</p>`
      : `<p>Accuracy does not fall between successive trial counts beyond chance (${ctx.text([...base, 'monotonicity', 'test'])}).</p>`;
    const svg = await sizingFigure(s);
    const provisional = s.provisional ? `<p class="warn">${ctx.text([...base, 'provisional'])}</p>\n` : '';
    return `${provisional}<p class="how">Each trial count was run on the same synthetic observers (smaller counts are the first trials of the larger ones). Observers were added where the answer was uncertain: ${ctx.text([...base, 'rule', 'decision'])} (${ctx.text([...base, 'rule', 'reference'])}). The intervals are anytime-valid, so they stay valid although the sweep looked at them after every round. The trials needed are read off a monotone (isotonic) fit of accuracy against log trial count${s.predicted ? '; the last column is the analytic preview\'s normal approximation, for comparison' : ''}.</p>
<div class="table-wrap"><table class="data"><caption>Trials per observer for ${ctx.num([...base, 'target'], 'percent')} correct choices</caption><thead><tr><th>generating model</th><th>trials needed</th><th>interval</th>${s.predicted ? '<th>predicted (analytic)</th>' : ''}</tr></thead><tbody>
${needed}
</tbody></table></div>
<div class="figs">
${ctx.figure('sizing-accuracy.svg', svg, 'Share of datasets whose generating model was chosen, by trial count (log scale): observed, the monotone fit and the analytic prediction; dotted: the target.', 'Accuracy against trial count')}
<div class="table-wrap"><table class="data"><caption>Accuracy with its 95% anytime-valid interval and observers used</caption><thead><tr><th>trials</th>${gens.map((g) => `<th>${ctx.name(g)}</th>`).join('')}</tr></thead><tbody>
${pointRows}
</tbody></table></div>
</div>
${falls}
<p class="caution">${ctx.text([...base, 'caution'])}</p>`;
  },
};
