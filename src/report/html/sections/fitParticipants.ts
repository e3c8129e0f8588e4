/**
 * One block of rows per participant: the decision (a model, or undecided
 * when the best models are too close), and for every candidate the
 * log-likelihood, the criterion difference to the best, the weight and the
 * fitted parameters with 95% intervals.
 */
import type { Section } from '../section.js';
import type { ReportContext } from '../context.js';
import { escapeHtml } from '../context.js';
import { isFitFolder } from '../data.js';
import { fitOf, PARTICIPANTS, criterionName } from '../fitData.js';

function parameters(ctx: ReportContext, i: number, j: number): string {
  const m = fitOf(ctx.data).participants[i].models[j];
  return m.parameters
    .map((q, k) => {
      const p = [...PARTICIPANTS, i, 'models', j, 'parameters', k];
      const interval = q.lower95 === null && q.upper95 === null ? '' : ` <span class="ci">[${ctx.num([...p, 'lower95'], 'value')}, ${ctx.num([...p, 'upper95'], 'value')}]</span>`;
      return `${ctx.name(q.name)} ${ctx.num([...p, 'estimate'], 'value')}${interval}${q.atBound ? ' <span class="note">(at bound)</span>' : ''}`;
    })
    .join('<br>');
}

export const fitParticipants: Section = {
  id: 'fit-participants',
  title: 'Per participant',
  applies: isFitFolder,
  render(ctx) {
    const f = fitOf(ctx.data);
    const boot = f.bootstrap?.results ?? [];
    // With --bootstrap: how often data simulated from the participant's best model chose it again.
    const bootCell = (participant: string, best: string | null) => {
      const k = boot.findIndex((b) => b.participant === participant && b.source === best);
      return k < 0 ? '–' : `${ctx.num(['summary', 'bootstrap', 'results', k, 'choseSource'], 'percent')} <span class="ci">of ${ctx.num(['summary', 'bootstrap', 'results', k, 'replicates'], 'count')}</span>`;
    };
    const crit = escapeHtml(criterionName(f.criterion));
    const blocks = f.participants.map((p, i) => {
      const base = [...PARTICIPANTS, i];
      const decision = p.decision === 'undecided' ? `<strong class="note">undecided</strong> <span class="muted">(${p.contenders.map((c) => ctx.name(c)).join(', ')})</span>` : p.decision === 'failed' ? `<span class="note">failed</span>` : `<strong>${ctx.name(p.decision)}</strong>`;
      const n = Math.max(1, p.models.length);
      const head = `<th scope="rowgroup" rowspan="${n}">${ctx.name(p.participant)}</th><td rowspan="${n}">${ctx.num([...base, 'trials'], 'count')}</td><td rowspan="${n}">${decision}</td>${boot.length ? `<td rowspan="${n}">${bootCell(p.participant, p.best)}</td>` : ''}`;
      if (!p.models.length) return `<tr class="group">${head}<td colspan="5">${p.error ? ctx.text([...base, 'error']) : 'no fit'}</td></tr>`;
      return p.models
        .map((m, j) => {
          const mp = [...base, 'models', j];
          const cells = m.fitStatus === 'ok'
            ? `<td>${ctx.num([...mp, 'logLikelihood'], 'value')}</td><td>${ctx.num([...mp, 'differenceToBest'], 'value')}</td><td>${ctx.num([...mp, 'weight'], 'percent')}</td><td>${parameters(ctx, i, j)}</td>`
            : `<td colspan="4" class="note">fit failed: ${ctx.text([...mp, 'note'])}</td>`;
          return `<tr${j === 0 ? ' class="group"' : ''}>${j === 0 ? head : ''}<td>${m.model === p.best ? `<strong>${ctx.name(m.model)}</strong>` : ctx.name(m.model)}</td>${cells}</tr>`;
        })
        .join('\n');
    });
    return `<p class="how">For every participant, every candidate model: the maximised log-likelihood, the ${crit} difference to the best model (zero for the best; larger is worse, in deviance units: twice the log-likelihood), the model's Akaike or Schwarz weight (its share of the evidence among the candidates) and the fitted parameters with 95% intervals. A participant is undecided when more than one model lies within the decision margin of the best; those models are listed.${boot.length ? ' With a bootstrap, datasets simulated from each participant\'s best model at its fitted parameters were refitted: the column gives how often that model was chosen again.' : ''}</p>
<div class="table-wrap"><table class="data fit-participants-table">
<thead><tr><th>participant</th><th>trials</th><th>decision</th>${boot.length ? '<th>bootstrap: same choice</th>' : ''}<th>model</th><th>log-likelihood</th><th>Δ ${crit}</th><th>weight</th><th>parameters [95% interval]</th></tr></thead>
<tbody>
${blocks.join('\n')}
</tbody></table></div>`;
  },
};
