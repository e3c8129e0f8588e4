/**
 * What each candidate loss makes the observer report: the loss shapes and
 * the Bayes estimate curves x̂(m), computed by the preview code at the
 * scenario's own parameter values.
 */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';
import { previewScenario } from '../../../cli/preview.js';
import { scenarioSchema } from '../../../scenario/schema.js';
import { validate } from '../../../scenario/load.js';
import { escapeHtml, type ReportContext } from '../context.js';

export const observerPreview: Section = {
  id: 'observer',
  title: 'The candidate observers',
  applies: isRecoveryFolder,
  async render(ctx) {
    let files: Record<string, string>;
    try {
      const s = validate(scenarioSchema, ctx.data.scenario.scenario, 'scenario.json');
      files = (await previewScenario(s, 'scenario.json')).files;
    } catch (e) {
      return `<p class="note">The loss shapes and estimate curves could not be drawn for this scenario: ${escapeHtml((e as Error).message)}</p>`;
    }
    return `<p class="how">Before any data: what each candidate loss implies, at the parameter values of the scenario.</p>
<div class="figs">
${previewFigures(ctx, files)}
</div>`;
  },
};

/** The preview's SVG files as captioned figures (shared with the preview's own page). */
export function previewFigures<D>(ctx: ReportContext<D>, files: Record<string, string>): string {
  const figs: string[] = [];
  for (const [file, svg] of Object.entries(files)) {
    if (!file.endsWith('.svg')) continue;
    const isLoss = file === 'loss-shapes.svg';
    const caption = isLoss
      ? 'Loss as a function of the error, each scaled to one at the largest error shown (about three noise standard deviations at the prior’s median).'
      : 'Bayes estimate x̂ against the measurement m for each candidate, at the scenario’s parameter values; the dotted line is the identity. Curves that lie on top of each other predict the same responses, and no number of trials can tell those models apart there.';
    figs.push(ctx.figure(file, svg, caption, isLoss ? 'Loss shapes' : 'Estimate curves'));
  }
  return figs.join('\n');
}
