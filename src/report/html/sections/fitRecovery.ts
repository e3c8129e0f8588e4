/** `fit --recovery RUN_FOLDER`: each participant's winner read against the recovery study of the design. */
import type { Section } from '../section.js';
import { isFitFolder } from '../data.js';
import { fitOf } from '../fitData.js';

export const fitRecovery: Section = {
  id: 'fit-recovery',
  title: 'Winners read against the recovery study',
  applies: (d) => isFitFolder(d) && !!fitOf(d).againstRecovery,
  render(ctx) {
    const r = fitOf(ctx.data).againstRecovery!;
    const base = ['summary', 'againstRecovery', 'participants'];
    const rows = r.participants.map((p, i) => {
      const pb = [...base, i];
      const params = p.parameters
        .map((q, k) => `${ctx.name(q.name)} ${ctx.num([...pb, 'parameters', k, 'estimate'], 'value')}: ${q.studiedRange === null ? 'not studied' : q.inStudiedRange === false ? '<span class="note">outside the studied range</span>' : q.recoveredWell ? 'recovered well there' : '<span class="note">recovered poorly there</span>'}${q.correlation === null ? '' : ` (r ${ctx.num([...pb, 'parameters', k, 'correlation'], 'correlation')})`}`)
        .join('<br>');
      return `<tr><th scope="row">${ctx.name(p.participant)}</th><td>${ctx.name(p.decision)}</td><td>${ctx.num([...pb, 'participantTrials'], 'count')}</td><td>${ctx.num([...pb, 'recoveryTrials'], 'count')}</td><td>${ctx.num([...pb, 'choiceRightInSimulation'], 'percent')} <span class="ci">of ${ctx.num([...pb, 'choiceMadeInSimulation'], 'count')}</span></td><td>${params}</td></tr>`;
    });
    return `<p>Recovery study <code>${ctx.text(['summary', 'againstRecovery', 'folder'])}</code>: ${ctx.text(['summary', 'againstRecovery', 'note'])}. For each decided participant, at the study's trial count nearest theirs: how often choosing that model was right when the truth was known (out of the synthetic datasets that chose it), and whether each fitted parameter lies where the study recovered it well.</p>
<div class="table-wrap"><table class="data fit-recovery-table">
<thead><tr><th>participant</th><th>decision</th><th>trials</th><th>study trials</th><th>choice right in simulation</th><th>parameters</th></tr></thead>
<tbody>
${rows.join('\n')}
</tbody></table></div>`;
  },
};
