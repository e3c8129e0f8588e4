/** What a simulation can and cannot promise; always shown, next to the headline. */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';

export const cautions: Section = {
  id: 'cautions',
  title: 'Read this before citing the numbers',
  width: 'half',
  applies: isRecoveryFolder,
  render(ctx) {
    const obs = ctx.num(['scenario', 'scenario', 'generate', 'observers'], 'count');
    return `<ul>
  <li>These results hold only under the simulation's assumptions: that people behave like one of the candidate models, with parameters in the ranges drawn here, and with the noise, lapses and design described in the methods.</li>
  <li>They are a check of the design, not evidence about real observers. A model outside the candidate set, or parameters outside the drawn ranges, can change every number.</li>
  <li>Intervals reflect only the simulation's own sampling (${obs} synthetic observers per generating model); more observers narrow them, they do not make the assumptions truer.</li>
  ${ctx.data.summary.byTrials ? '<li>A trial count read off the sweep holds for this design and these parameter ranges; real observers with more noise or more lapses need more trials. Leave a margin, and check it in a pilot.</li>\n  ' : ''}<li>A simulation complements, and does not replace, a pilot study and the advice of your local ethics board and statistician. Say so wherever you cite these figures.</li>
</ul>`;
  },
};
