/**
 * Parameter recovery: per parameter, fitted against true values from each
 * generating model's own fit, with r and RMSE per model in the panel title;
 * then the full table (bias, RMSE, interval coverage).
 */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';
import { slug } from '../context.js';
import { focusOf } from '../focus.js';
import { formatNumber } from '../../format.js';
import { recoveryScatter, type RecoveryDot } from '../../figures/recoveryScatter.js';

export const parameterRecovery: Section = {
  id: 'parameter-recovery',
  title: 'Parameter recovery',
  applies: (d) => isRecoveryFolder(d) && d.summary.overall.recovery.some((m) => m.parameters.some((p) => (p.n ?? 0) > 0)),
  async render(ctx) {
    const f = focusOf(ctx);
    const rec = f.summary.recovery;
    const models = rec.map((m) => m.generating);
    const names: string[] = [];
    for (const m of rec) for (const p of m.parameters) if (!names.includes(p.name)) names.push(p.name);
    const t = ctx.data.settings.focusTrials;
    const lines = ctx.data.lines.filter((l) => l.status === 'ok' && (t === null || l.trials === t));
    const figures: string[] = [];
    for (const name of names) {
      const dots: RecoveryDot[] = [];
      for (const l of lines) {
        const fit = l.fits.find((x) => x.model === l.generating && x.status === 'ok');
        const p = fit?.parameters.find((q) => q.name === name);
        const truth = l.truth[name];
        if (p && Number.isFinite(p.value) && Number.isFinite(truth)) dots.push({ model: l.generating, truth, fitted: p.value });
      }
      if (!dots.length) continue;
      const subtitle = rec.flatMap((m) => {
        const p = m.parameters.find((q) => q.name === name);
        return p && (p.n ?? 0) > 0 ? [`${m.generating}: r ${formatNumber(p.pearson, 'correlation')} · RMSE ${formatNumber(p.rmse, 'value')} · n ${formatNumber(p.n, 'count')}`] : [];
      });
      const svg = await recoveryScatter({ title: name, subtitle, models, dots });
      figures.push(ctx.figure(`recovery-${slug(name)}.svg`, svg, `${ctx.name(name)}: fitted against true value, coloured by generating model; dashed line: perfect recovery.`, `Parameter recovery of ${name}`));
    }
    const rows: string[] = [];
    rec.forEach((m, i) => {
      m.parameters.forEach((p, k) => {
        const base = [...f.path, 'recovery', i, 'parameters', k];
        const model = k === 0 ? `<th scope="rowgroup" rowspan="${m.parameters.length}">${ctx.name(m.generating)}</th>` : '';
        rows.push(
          `<tr class="${k === 0 ? 'group' : ''}">${model}<td>${ctx.name(p.name)}</td><td>${ctx.num([...base, 'n'], 'count')}</td><td>${ctx.num([...base, 'pearson'], 'correlation')}</td><td>${ctx.num([...base, 'bias'], 'value')}</td><td>${ctx.num([...base, 'rmse'], 'value')}</td><td>${ctx.num([...base, 'coverage', 'estimate'], 'percent')} <span class="ci">${ctx.num([...base, 'coverage', 'lower'], 'percent')}–${ctx.num([...base, 'coverage', 'upper'], 'percent')}</span></td><td>${ctx.num([...base, 'atBound'], 'count')}</td></tr>`,
        );
      });
    });
    // Loss parameters by bins of their true value: a loss is often recoverable in one part of its range only.
    const binTables: string[] = [];
    rec.forEach((m, i) =>
      m.parameters.forEach((p, k) => {
        if (!p.bins || p.bins.length < 2) return; // one bin: the true value never varied
        const base = [...f.path, 'recovery', i, 'parameters', k, 'bins'];
        const body = p.bins
          .map((_, b) => `<tr><td>${ctx.num([...base, b, 'lower'], 'value')} to ${ctx.num([...base, b, 'upper'], 'value')}</td><td>${ctx.num([...base, b, 'n'], 'count')}</td><td>${ctx.num([...base, b, 'bias'], 'value')}</td><td>${ctx.num([...base, b, 'rmse'], 'value')}</td><td>${ctx.num([...base, b, 'coverage', 'estimate'], 'percent')}</td></tr>`)
          .join('\n');
        binTables.push(`<div class="table-wrap"><table class="data"><caption>${ctx.name(p.name)} of ${ctx.name(m.generating)}, by its true value</caption><thead><tr><th>true value</th><th>n</th><th>bias</th><th>RMSE</th><th>coverage</th></tr></thead><tbody>\n${body}\n</tbody></table></div>`);
      }),
    );
    return `<p class="how">Only the generating model's own fit has true values to compare with. Points on the dashed line are recovered exactly; r is the correlation of true and fitted values, RMSE the root mean squared error, ${f.phrase}.</p>
<div class="figs panels">
${figures.join('\n')}
</div>
<div class="table-wrap"><table class="data"><caption>Recovery of each parameter by its own generating model. Coverage: share of datasets whose 95% interval (from the fit's standard error) holds the true value; nominal 95%.</caption>
<thead><tr><th>generating model</th><th>parameter</th><th>n</th><th>r</th><th>bias</th><th>RMSE</th><th>coverage</th><th>at a bound</th></tr></thead><tbody>
${rows.join('\n')}
</tbody></table></div>
${binTables.length ? `<div class="figs">${binTables.join('\n')}</div>` : ''}`;
  },
};
