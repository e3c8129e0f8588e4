/**
 * Group level of a fit: winners per model, random-effects model selection
 * (expected frequencies, exceedance and protected exceedance; Stephan et al.
 * 2009, Rigoux et al. 2014) and, first and prominent, the warnings about
 * models the data cannot tell apart.
 */
import type { Section } from '../section.js';
import { escapeHtml } from '../context.js';
import { isFitFolder } from '../data.js';
import { fitOf, GROUP, criterionName } from '../fitData.js';

export const fitGroup: Section = {
  id: 'fit-group',
  title: 'Group level',
  applies: isFitFolder,
  render(ctx) {
    const f = fitOf(ctx.data);
    const g = f.group;
    const re = g.randomEffects;
    const warnings = g.warnings.length
      ? `<div class="separation fit-warnings"><strong>Warning${g.warnings.length > 1 ? 's' : ''}:</strong><ul class="ties">${g.warnings.map((_, i) => `<li>${ctx.text([...GROUP, 'warnings', i])}</li>`).join('')}</ul></div>\n`
      : '';
    const rows = g.winnerCounts.map((w, i) => {
      const reCells = re
        ? (() => {
            const j = re.models.indexOf(w.model);
            const p = [...GROUP, 'randomEffects'];
            return j < 0
              ? '<td>–</td><td>–</td><td>–</td>'
              : `<td>${ctx.num([...p, 'expectedFrequency', j], 'percent')}</td><td>${ctx.num([...p, 'exceedanceProbability', j], 'percent')}</td><td>${ctx.num([...p, 'protectedExceedanceProbability', j], 'percent')}</td>`;
          })()
        : '';
      return `<tr><th scope="row">${ctx.name(w.model)}</th><td>${ctx.num([...GROUP, 'winnerCounts', i, 'participants'], 'count')}</td>${reCells}</tr>`;
    });
    const reHead = re ? '<th>expected frequency</th><th>exceedance probability</th><th>protected exceedance</th>' : '';
    const reText = re
      ? `<p>Random-effects model selection treats each participant's model as drawn from a group distribution over the candidates. Its evidence per participant and model is the ${escapeHtml(re.logEvidenceDescription)}; it used ${ctx.num([...GROUP, 'randomEffects', 'participantsUsed'], 'count')} participants${re.participantsLeftOut.length ? ` (left out: ${re.participantsLeftOut.map((p) => ctx.name(p)).join(', ')})` : ''}. Bayesian omnibus risk (the probability that all models are equally frequent in the group): ${ctx.num([...GROUP, 'randomEffects', 'bayesianOmnibusRisk'], 'percent')}${re.converged ? '' : '; <span class="note">the variational estimate did not converge</span>'}. A high omnibus risk means the group data do not favour any model; protected exceedance then stays near chance, as it should.</p>`
      : '<p class="note">No random-effects model selection: too few participants had usable evidence for every model.</p>';
    return `${warnings}<p>Each participant's winner under the ${escapeHtml(criterionName(g.criterion))}: ${ctx.num([...GROUP, 'participants'], 'count')} participants, ${ctx.num([...GROUP, 'undecided'], 'count')} undecided, ${ctx.num([...GROUP, 'failed'], 'count')} failed.</p>
<div class="table-wrap"><table class="data fit-group-table">
<thead><tr><th>model</th><th>participants won</th>${reHead}</tr></thead>
<tbody>
${rows.join('\n')}
</tbody></table></div>
${reText}`;
  },
};
