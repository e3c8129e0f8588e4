/** What a model comparison on real data can and cannot promise; always shown on a fit report. */
import type { Section } from '../section.js';
import { isFitFolder } from '../data.js';

export const fitCautions: Section = {
  id: 'cautions',
  title: 'Read this before citing the numbers',
  applies: isFitFolder,
  render(ctx) {
    const hasRecovery = !!ctx.data.summary.againstRecovery;
    return `<ul>
  <li>A winning model is only the best of the candidates compared here; a way of responding outside the candidate set can win nowhere and still be the truth. The predictive checks below show whether the winner reproduces the observed errors at all.</li>
  <li>Close criterion differences and weights near each other mean the data barely decide between those models. Only models within the scenario's decision margin make a participant undecided, so a narrow win still counts as a win here: read it as a weak one.</li>
  <li>${hasRecovery ? 'How often a choice was right in simulation holds only under the recovery study\'s assumptions (its parameter ranges, noise and design).' : 'Without a recovery study of this design (<code>--recovery RUN_FOLDER</code>) there is no telling how often such a choice would be right; run one before reading winners as facts.'}</li>
  <li>${typeof ctx.data.summary.caution === 'string' ? ctx.text(['summary', 'caution']) : ''} Say so wherever you cite these figures.</li>
</ul>`;
  },
};
