/**
 * The preview's page (report.html in the preview folder): the observer
 * design, the estimate table, the loss shapes and estimate curves, the
 * candidates no design variation of these values can separate, and the
 * cautions. Built with the same toolkit and formatter as a run's report.
 */
import type { Scenario } from '../../../scenario/schema.js';
import { ReportContext } from '../context.js';
import { buildPage, type BuiltReport } from '../page.js';
import type { Section } from '../section.js';
import { design } from '../scenarioWords.js';
import { previewFigures } from '../sections/observerPreview.js';
import { listNames } from '../sentences.js';
import { analyticSection } from './analyticSection.js';
import type { DesignPreview } from '../../previewOutputs.js';
import { jsonSafe } from '../../../analysis/jsonSafe.js';

export interface PreviewPageData {
  scenario: { scenario: Scenario };
  measurements: number[];
  /** estimates[condition][model][measurement] */
  estimates: number[][][];
  files: Record<string, string>;
  /** Candidate pairs with identical estimates everywhere tabulated. */
  identical: [string, string][];
  /** The analytic preview of the base design and each variant (absent with --no-analytic). */
  designs?: DesignPreview[];
}

type Ctx = ReportContext<PreviewPageData>;

const header: Section<PreviewPageData> = {
  id: 'top',
  title: '',
  applies: () => true,
  render: (ctx: Ctx) => {
    const s = ctx.data.scenario.scenario;
    return `<header class="top">
  <p class="kicker">lossprobe report · Preview of the candidate observers</p>
  <h1>${ctx.name(s.name)}</h1>
  ${s.description ? `<p class="lede">${ctx.name(s.description)}</p>` : ''}
  <p class="meta">What each candidate loss makes the observer report under this design, before any simulation.</p>
</header>`;
  },
};

const findings: Section<PreviewPageData> = {
  id: 'glance',
  title: 'At a glance',
  width: 'half',
  applies: () => true,
  render: (ctx: Ctx) => {
    const s = ctx.data.scenario.scenario;
    const same = ctx.data.identical;
    const verdict = same.length
      ? `<p><strong>Some candidates predict identical estimates here</strong>: ${same.map(([a, b]) => listNames(ctx, [a, b])).join('; ')}. Distinct families that coincide cannot be told apart by any number of trials under this design; a family containing another (power contains squared and absolute) coincides with it only at that parameter value.</p>`
      : `<p>The candidates' estimates differ at the tabulated measurements, so the design can in principle separate them; how many trials that takes is the question for <code>lossprobe run</code> (and <code>lossprobe size</code>).</p>`;
    return `<p>${design(ctx, false)}</p>
<p>Candidates: ${listNames(ctx, s.models.map((m) => m.name))}.</p>
${verdict}`;
  },
};

const cautions: Section<PreviewPageData> = {
  id: 'cautions',
  title: 'Read this before relying on the preview',
  width: 'half',
  applies: () => true,
  render: () => `<ul>
  <li>The curves are computed at the scenario's parameter values only; other noise levels, priors or loss parameters can bring candidates together or apart.</li>
  <li>Different estimates do not yet mean a study can tell the models apart: motor noise, lapses and the number of trials decide that. Run a recovery study before planning around it.</li>
  <li>A simulation holds only under its assumptions; it complements, and does not replace, a pilot study and the advice of your local ethics board and statistician.</li>
</ul>`,
};

const estimates: Section<PreviewPageData> = {
  id: 'estimates',
  title: 'Bayes estimate at selected measurements',
  applies: () => true,
  render: (ctx: Ctx) => {
    const s = ctx.data.scenario.scenario;
    const tables = s.conditions.map((c, ci) => {
      const head = `<tr><th>measurement</th>${s.models.map((m) => `<th>${ctx.name(m.name)}</th>`).join('')}</tr>`;
      const rows = ctx.data.measurements.map((_, i) => `<tr><td>${ctx.num(['preview', 'measurements', i], 'value')}</td>${s.models.map((_, k) => `<td>${ctx.num(['preview', 'estimates', ci, k, i], 'value')}</td>`).join('')}</tr>`);
      return `<div class="table-wrap"><table class="data"><caption>Condition ${ctx.name(c.name)} (stimulus units)</caption><thead>${head}</thead><tbody>
${rows.join('\n')}
</tbody></table></div>`;
    });
    return `${tables.join('\n')}
<div class="figs">
${previewFigures(ctx, ctx.data.files)}
</div>`;
  },
};

export const PREVIEW_SECTIONS: readonly Section<PreviewPageData>[] = [header, findings, cautions, estimates, analyticSection<PreviewPageData>()];

export async function previewPage(data: PreviewPageData): Promise<BuiltReport> {
  const embedded = { scenario: data.scenario, preview: { measurements: data.measurements, estimates: data.estimates }, analytic: jsonSafe(data.designs ?? []) };
  return buildPage(new ReportContext(data, embedded), PREVIEW_SECTIONS, `${data.scenario.scenario.name}: lossprobe preview`);
}
