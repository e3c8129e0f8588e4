/**
 * A methods paragraph for a fit, to paste into a paper: data, participants,
 * trials, candidate models, criterion, group-level evidence, seed, hashes and
 * versions. Generated from summary.json and scenario.json only.
 */
import type { Section } from '../section.js';
import { escapeHtml } from '../context.js';
import { isFitFolder } from '../data.js';
import { listNames } from '../sentences.js';
import { fitOf, PARTICIPANTS, criterionName } from '../fitData.js';

export const fitMethods: Section = {
  id: 'methods',
  title: 'Methods paragraph',
  applies: isFitFolder,
  render(ctx) {
    const f = fitOf(ctx.data);
    const ps = f.participants;
    // Where the trial counts are extreme, by index, so both ends are traceable raw values.
    let lo = 0;
    let hi = 0;
    ps.forEach((p, i) => {
      if (p.trials < ps[lo].trials) lo = i;
      if (p.trials > ps[hi].trials) hi = i;
    });
    const trials = !ps.length ? '' : ps[lo].trials === ps[hi].trials ? `${ctx.num([...PARTICIPANTS, lo, 'trials'], 'count')} trials each` : `${ctx.num([...PARTICIPANTS, lo, 'trials'], 'count')} to ${ctx.num([...PARTICIPANTS, hi, 'trials'], 'count')} trials each`;
    const re = f.group.randomEffects;
    const group = re
      ? `At group level, random-effects Bayesian model selection (Stephan et al. 2009; protected exceedance after Rigoux et al. 2014) used the ${escapeHtml(re.logEvidenceDescription)} of ${ctx.num(['summary', 'group', 'randomEffects', 'participantsUsed'], 'count')} participants as each model's log evidence; the Bayesian omnibus risk was ${ctx.num(['summary', 'group', 'randomEffects', 'bayesianOmnibusRisk'], 'percent')}.`
      : 'Random-effects model selection was not possible with these data.';
    return `<p class="how">Generated from the scenario and the results; edit freely. Every number below is also in <code>summary.json</code> or <code>scenario.json</code>.</p>
<div class="methods" id="methods-text" data-criterion="${escapeHtml(f.criterion.toUpperCase())}">
<p>We fitted the responses of ${ctx.num(['summary', 'group', 'participants'], 'count')} participants (${trials}; data file <code>${ctx.text(['summary', 'dataFile'])}</code>) with the candidate observer models ${listNames(ctx, f.models)} by maximum likelihood, separately per participant, and compared them by the ${escapeHtml(criterionName(f.criterion))}. A participant whose best models lay within the decision margin was counted as undecided (${ctx.num(['summary', 'group', 'undecided'], 'count')} participants); fits failed for ${ctx.num(['summary', 'group', 'failed'], 'count')}.</p>
<p>${group}</p>
<p>The fit was run with lossprobe ${ctx.text(['summary', 'provenance', 'toolVersion'])} on Node.js ${ctx.text(['summary', 'provenance', 'node'])}, scenario seed ${ctx.num(['scenario', 'scenario', 'seed'], 'id')}; the resolved scenario has SHA-256 hash <code class="hash">${ctx.text(['summary', 'provenance', 'scenarioHash'])}</code> and the fit (scenario, data and settings) <code class="hash">${ctx.text(['summary', 'provenance', 'fitHash'])}</code>.</p>
</div>`;
  },
};
