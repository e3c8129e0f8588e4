/**
 * Design variants side by side, when summary.json carries `variants`
 * (one recovery summary per variant, written by the commands that compare
 * designs): overall recovery per variant and their confusion matrices.
 */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';
import { slug } from '../context.js';
import { confusionFigure } from './modelRecovery.js';

export const designVariants: Section = {
  id: 'variants',
  title: 'Design variants side by side',
  applies: (d) => isRecoveryFolder(d) && Array.isArray(d.summary.variants) && d.summary.variants.length > 0,
  async render(ctx) {
    const variants = ctx.data.summary.variants!;
    const rows = variants.map((v, k) => {
      const a = ['summary', 'variants', k, 'overall', 'accuracy'];
      const b = ['summary', 'variants', k, 'overall', 'balancedAccuracy'];
      return `<tr><td>${ctx.name(v.name)}</td><td>${ctx.num([...a, 'estimate'], 'percent')} <span class="ci">${ctx.num([...a, 'lower'], 'percent')}–${ctx.num([...a, 'upper'], 'percent')}</span></td><td>${ctx.num([...b, 'estimate'], 'percent')}</td><td>${ctx.num([...a, 'n'], 'count')}</td></tr>`;
    });
    const figs: string[] = [];
    for (const [k, v] of variants.entries()) {
      const focus = { summary: v.overall, path: ['summary', 'variants', k, 'overall'], phrase: `for design ${ctx.name(v.name)}` };
      figs.push(await confusionFigure(ctx, focus, `variant-${slug(v.name)}-confusion.svg`, `Design ${v.name}`, true));
    }
    return `<p class="how">The same candidate models under each design. Prefer the design whose matrix is most concentrated on its diagonal at the trial count you can afford.</p>
<div class="table-wrap"><table class="data"><thead><tr><th>design</th><th>generating model chosen</th><th>balanced accuracy</th><th>datasets</th></tr></thead><tbody>
${rows.join('\n')}
</tbody></table></div>
<div class="figs">
${figs.join('\n')}
</div>`;
  },
};
