/** Title block: what was studied and how to trace it (seed, scenario hash, versions). */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';

export const header: Section = {
  id: 'top',
  title: '',
  applies: isRecoveryFolder,
  render(ctx) {
    const s = ctx.data.summary;
    const sc = ctx.data.scenario.scenario;
    const kind = s.byTrials ? 'Trial-count sweep of a model-recovery study' : 'Model-recovery study';
    const description = sc.description ? `<p class="lede">${ctx.name(sc.description)}</p>` : '';
    return `<header class="top">
  <p class="kicker">lossprobe report · ${kind}</p>
  <h1>${ctx.name(s.name)}</h1>
  ${description}
  <p class="meta">Seed ${ctx.num(['summary', 'seed'], 'id')} · scenario <code class="hash" title="SHA-256 of the resolved scenario">${ctx.text(['summary', 'provenance', 'scenarioHash'])}</code> · lossprobe ${ctx.text(['summary', 'provenance', 'toolVersion'])} on Node ${ctx.text(['summary', 'provenance', 'node'])}</p>
</header>`;
  },
};
