/**
 * Plain-words result per generating model, built from the confusion matrix
 * with every number traceable (the analysis' verdict kinds decide which
 * sentence applies; the wording here is the report's own).
 */
import type { ReportContext } from './context.js';
import type { Focus } from './focus.js';

export type Tone = 'good' | 'doubt' | 'bad';

export function listNames<D>(ctx: ReportContext<D>, names: readonly string[]): string {
  const n = names.map((s) => ctx.name(s));
  return n.length <= 1 ? n.join('') : `${n.slice(0, -1).join(', ')} and ${n[n.length - 1]}`;
}

/**
 * The result for generating model i: `rest` is verb-led ("recovered in …"),
 * so it reads after the name both as a list item ("squared: recovered in …")
 * and inside the methods paragraph ("squared was recovered in …").
 */
export function rowSentence(ctx: ReportContext, f: Focus, i: number): { html: string; name: string; rest: string; tone: Tone } {
  const c = f.summary.confusion;
  const cp = [...f.path, 'confusion'];
  const g = ctx.name(c.rows[i]);
  const done = (rest: string, tone: Tone) => ({ html: `${g}: ${rest}.`, name: g, rest, tone });
  const n = `${ctx.num([...cp, 'n', i], 'count')} dataset${c.n[i] === 1 ? '' : 's'}`;
  const kind = f.summary.verdicts[i]?.kind;
  const extras: string[] = [];
  if ((c.undecided[i] ?? 0) > 0) extras.push(`${ctx.num([...cp, 'undecidedRate', i], 'percent')} undecided or tied`);
  if ((c.failed[i] ?? 0) > 0) extras.push(`${ctx.num([...cp, 'failedRate', i], 'percent')} failed to fit`);
  const others = c.columns
    .map((name, j) => ({ name, j, count: c.counts[i][j] ?? 0 }))
    .filter((x) => x.j !== c.diagonal[i] && x.count > 0)
    .sort((a, b) => b.count - a.count || a.j - b.j);
  const tail = () => (extras.length ? `; ${extras.join('; ')}` : '');
  if (kind === 'no-data') return done('no datasets', 'bad');
  if (kind === 'failed') return done(`failed to fit in every one of ${n}`, 'bad');
  if (kind === 'not-candidate') {
    const chosen = others.slice(0, 3).map((x) => `${ctx.name(x.name)} (${ctx.num([...cp, 'rate', i, x.j], 'percent')})`);
    return done(`not a candidate; its ${n} were fitted best by ${chosen.length ? chosen.join(', ') : 'no model'}${tail()}`, 'doubt');
  }
  if (kind === 'not-identifiable') {
    const top = c.ties[i][0];
    // The share undecided in all only adds something when other tie groups exist.
    if ((c.undecided[i] ?? 0) > 0) extras.shift();
    if ((c.undecided[i] ?? 0) > (top.count ?? 0)) extras.unshift(`${ctx.num([...cp, 'undecidedRate', i], 'percent')} undecided or tied in all`);
    return done(`<strong>not identifiable under this design</strong>: in ${ctx.num([...cp, 'ties', i, 0, 'rate'], 'percent')} of ${n} the criterion could not separate ${listNames(ctx, top.contenders)}${tail()}`, 'bad');
  }
  const j = c.diagonal[i]!;
  if (others.length) extras.unshift(`most often mistaken for ${ctx.name(others[0].name)} (${ctx.num([...cp, 'rate', i, others[0].j], 'percent')})`);
  const lower = c.lower[i][j];
  const includesChance = c.columns.length > 1 && lower !== null && lower <= (f.summary.chance ?? NaN);
  if (includesChance) extras.push(`the interval reaches down to chance (${ctx.num([...f.path, 'chance'], 'percent')})`);
  const rest = `recovered in ${ctx.num([...cp, 'rate', i, j], 'percent')} of ${n} (95% interval ${ctx.num([...cp, 'lower', i, j], 'percent')} to ${ctx.num([...cp, 'upper', i, j], 'percent')})${tail()}`;
  return done(rest, includesChance || (c.rate[i][j] ?? 0) < 0.5 ? 'doubt' : 'good');
}

/** Generating models the design cannot separate: rows called not identifiable, or whose recovery interval reaches chance. */
export function weakRows(f: Focus): number[] {
  const c = f.summary.confusion;
  return c.rows
    .map((_, i) => i)
    .filter((i) => {
      const kind = f.summary.verdicts[i]?.kind;
      if (kind === 'not-identifiable' || kind === 'failed') return true;
      const j = c.diagonal[i];
      const lower = j === null ? null : c.lower[i][j];
      return kind === 'recovery' && c.columns.length > 1 && lower !== null && lower <= (f.summary.chance ?? NaN);
    });
}

/** The plain statement of what the design cannot separate (empty when every row is recovered above chance). */
export function separationStatement(ctx: ReportContext, f: Focus): string {
  const weak = weakRows(f);
  const rows = f.summary.confusion.rows;
  if (weak.length)
    return `<strong>This design cannot reliably separate ${listNames(ctx, weak.map((i) => rows[i]))} from the other candidates</strong>: ${weak.length === 1 ? 'its' : 'their'} recovery is not clearly above chance, or the comparison was undecided in most datasets.`;
  return rows.length > 1 ? 'Every generating model was recovered with a 95% interval above chance.' : '';
}
