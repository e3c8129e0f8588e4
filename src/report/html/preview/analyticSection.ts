/**
 * The analytic half of the preview page: per design, the distinguishability
 * matrix (KL per trial, both directions), what each pair's label means, the
 * predicted trials for the target, predicted standard errors, and the
 * predicted-accuracy and response-moment figures. Numbers come from
 * preview.json's `designs` (embedded as `analytic`).
 */
import type { ReportContext } from '../context.js';
import type { Section } from '../section.js';
import type { DesignPreview } from '../../previewOutputs.js';
import { predictedAccuracyFigure, responseMomentsFigure } from '../../previewOutputs.js';

export interface AnalyticPageData {
  designs?: DesignPreview[];
}

export function analyticSection<D extends AnalyticPageData>(): Section<D> {
  return {
    id: 'distinguishability',
    title: 'Can the design tell the models apart? (analytic)',
    applies: (d) => Array.isArray(d.designs) && d.designs.length > 0,
    async render(ctx: ReportContext<D>) {
      const designs = ctx.data.designs!;
      const out: string[] = [];
      for (const [k, d] of designs.entries()) {
        const a = d.analytic;
        const base = ['analytic', k, 'analytic'];
        const head = `<tr><th>generating ↓ / candidate →</th>${a.divergence.columns.map((c) => `<th>${ctx.name(c)}</th>`).join('')}</tr>`;
        const rows = a.divergence.rows.map(
          (r, i) => `<tr><th>${ctx.name(r)}</th>${a.divergence.columns.map((c, j) => (c === r ? '<td>·</td>' : `<td>${ctx.num([...base, 'divergence', 'kl', i, j], 'value')}</td>`)).join('')}</tr>`,
        );
        const needed = a.generating.map((g) => `<li>${ctx.name(g)}: ${a.predicted.trialsNeeded[g] === null ? 'not reached in the range searched' : `about ${ctx.num([...base, 'predicted', 'trialsNeeded', g], 'count')} trials`}</li>`);
        const se = a.fisher.flatMap((f, fi) => f.parameters.map((p, pi) => `<tr><td>${ctx.name(f.model)}</td><td>${ctx.name(p)}</td><td>${ctx.num([...base, 'typical', f.model, p], 'value')}</td><td>${f.se[pi] === null ? '–' : ctx.num([...base, 'fisher', fi, 'se', pi], 'value')}</td></tr>`));
        // The same file names as the preview folder's (report/previewOutputs.ts via cli/previewAnalytic.ts).
        const prefix = d.variant === 'base' ? '' : `${d.variant}-`;
        const figs = [ctx.figure(`${prefix}predicted-accuracy.svg`, await predictedAccuracyFigure(d), 'Predicted chance that the generating model is chosen, by trials per observer (log scale); dotted: the target.', 'Predicted accuracy by trial count')];
        for (const c of [...new Set(a.responseMoments.map((m) => m.condition))])
          figs.push(ctx.figure(`${prefix}response-moments-${c}.svg`, await responseMomentsFigure(d, c), `Predicted response mean and standard deviation by stimulus under each generating model, condition ${ctx.name(c)}.`, 'Predicted response mean and sd'));
        out.push(`${designs.length > 1 ? `<h3>Design ${ctx.name(d.variant)}</h3>` : ''}
<p class="how">Each cell is the smallest Kullback–Leibler divergence per trial (nats) from the generating model's responses, at its typical parameters, to the candidate's, over the candidate's parameters. Zero both ways: the models are equivalent under this design and no number of trials separates them; zero one way: nested, the simpler model is chosen only through the criterion's penalty.</p>
<div class="table-wrap"><table class="data"><thead>${head}</thead><tbody>
${rows.join('\n')}
</tbody></table></div>
<ul>${a.statements.map((_, i) => `<li>${ctx.text([...base, 'statements', i])}</li>`).join('')}</ul>
<p>How accuracy is predicted: ${ctx.text([...base, 'predicted', 'method'])}.</p>
<p>Predicted trials per observer for ${ctx.num([...base, 'predicted', 'target'], 'percent')} correct choices:</p><ul>${needed.join('')}</ul>
<div class="table-wrap"><table class="data"><caption>Predicted standard errors at ${ctx.num([...base, 'fisher', 0, 'trials'], 'count')} trials (expected Fisher information)</caption><thead><tr><th>model</th><th>parameter</th><th>typical value</th><th>predicted SE</th></tr></thead><tbody>
${se.join('\n')}
</tbody></table></div>
<div class="figs">
${figs.join('\n')}
</div>`);
      }
      return out.join('\n');
    },
  };
}
