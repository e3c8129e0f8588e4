/** The headline: how often the truth came back, and one sentence per generating model. */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';
import { focusOf } from '../focus.js';
import { rowSentence, separationStatement, weakRows } from '../sentences.js';

export const glance: Section = {
  id: 'glance',
  title: 'At a glance',
  width: 'half',
  applies: isRecoveryFolder,
  render(ctx) {
    const f = focusOf(ctx);
    const a = [...f.path, 'accuracy'];
    const b = [...f.path, 'balancedAccuracy'];
    const rows = f.summary.confusion.rows.map((_, i) => rowSentence(ctx, f, i));
    // A sweep merged round by round on a cluster says so where the headline is
    // read, not only in its own section: the number may still move.
    const sizing = (ctx.data.summary as { sizing?: { provisional?: string } }).sizing;
    const provisional = sizing?.provisional ? `<p class="warn">${ctx.text(['summary', 'sizing', 'provisional'])}</p>\n` : '';
    return `${provisional}<div class="headline">
  <div class="big">${ctx.num([...a, 'estimate'], 'percent')}</div>
  <div class="big-text">of synthetic datasets were best fitted by the model that generated them, ${f.phrase}.<br>
  <span class="muted">95% interval ${ctx.num([...a, 'lower'], 'percent')} to ${ctx.num([...a, 'upper'], 'percent')} · ${ctx.num([...a, 'n'], 'count')} datasets · chance ${ctx.num([...f.path, 'chance'], 'percent')} · balanced accuracy ${ctx.num([...b, 'estimate'], 'percent')}</span></div>
</div>
${weakRows(f).length ? `<p class="separation">${separationStatement(ctx, f)}</p>\n` : ''}<ul class="verdicts">
${rows.map((r) => `  <li class="tone-${r.tone}">${r.html}</li>`).join('\n')}
</ul>`;
  },
};
