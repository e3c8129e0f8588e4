/** Title block of a fit folder: which data, which scenario, how to trace it. */
import type { Section } from '../section.js';
import { isFitFolder } from '../data.js';

export const fitHeader: Section = {
  id: 'top',
  title: '',
  applies: isFitFolder,
  render(ctx) {
    const sc = ctx.data.scenario.scenario;
    const description = sc.description ? `<p class="lede">${ctx.name(sc.description)}</p>` : '';
    return `<header class="top">
  <p class="kicker">lossprobe report · Model comparison on participants' data</p>
  <h1>${ctx.name(ctx.data.summary.name)}</h1>
  ${description}
  <p class="meta">Data <code>${ctx.text(['summary', 'dataFile'])}</code> · ${ctx.num(['summary', 'group', 'participants'], 'count')} participants · fit <code class="hash" title="SHA-256 of scenario, data and fit settings">${ctx.text(['summary', 'provenance', 'fitHash'])}</code> · lossprobe ${ctx.text(['summary', 'provenance', 'toolVersion'])} on Node ${ctx.text(['summary', 'provenance', 'node'])}</p>
</header>`;
  },
};
