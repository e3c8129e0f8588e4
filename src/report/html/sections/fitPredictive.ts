/** Posterior-predictive Q–Q plots, one per participant (the same figures as figures/predictive-<id>.svg). */
import type { Section } from '../section.js';
import { isFitFolder } from '../data.js';
import { fitOf } from '../fitData.js';
import { figureName, predictiveFigure } from '../../fitFigures.js';

export const fitPredictive: Section = {
  id: 'fit-predictive',
  title: 'Predictive checks',
  applies: (d) => isFitFolder(d) && fitOf(d).participants.some((p) => p.models.some((m) => m.predictiveCheck)),
  async render(ctx) {
    const figs: string[] = [];
    for (const p of fitOf(ctx.data).participants) {
      const svg = await predictiveFigure(p);
      if (!svg) continue;
      figs.push(ctx.figure(figureName(p.participant), svg, `Participant ${ctx.name(p.participant)}: observed against simulated error quantiles per model.`, `Quantile–quantile plot of participant ${p.participant}'s response errors against those simulated by each fitted model`));
    }
    return `<p class="how">Each model is simulated at the participant's fitted parameters and the quantiles of its response errors (five, from the tenth to the ninetieth percentile) are plotted against the observed ones. A model that reproduces the data lies on the diagonal; a winner far from it is only the least bad of the candidates. The distances are in <code>predictive-checks.csv</code>.</p>
<div class="figs">
${figs.join('\n')}
</div>`;
  },
};
