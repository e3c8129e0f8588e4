/**
 * One plain-words line per generating model, for the terminal and the report.
 *
 * Reference: R. C. Wilson & A. G. E. Collins (2019), "Ten simple rules for
 * the computational modeling of behavioral data", eLife 8:e49547, rule 6:
 * read the confusion matrix row by row, and say so when models cannot be
 * told apart rather than reporting a winner. Intervals are the Wilson
 * intervals of the confusion matrix (Wilson 1927, JASA).
 *
 * The lines only restate numbers in the summary; the one judgement, when a
 * row is called "not identifiable", is the documented rule below.
 */
import type { ConfusionMatrix, TieGroup } from './confusion.js';

/**
 * A row is called not identifiable under the design when at least this
 * share of its datasets ended tied or undecided (our own rule: then no
 * single model wins the majority of datasets, whatever the rest do).
 */
export const NOT_IDENTIFIABLE_SHARE = 0.5;

export type VerdictKind = 'recovery' | 'not-identifiable' | 'not-candidate' | 'failed' | 'no-data';

export interface Verdict {
  generating: string;
  kind: VerdictKind;
  text: string;
}

/** Whole percent; shares that round to 0 or 100 without being so are shown as <1 and >99. */
export function percent(x: number): string {
  if (!Number.isFinite(x)) return '?';
  if (x > 0 && x < 0.005) return '<1';
  if (x < 1 && x >= 0.995) return '>99';
  return String(Math.round(x * 100));
}

function list(names: readonly string[]): string {
  return names.length <= 1 ? names.join('') : `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
}

function datasets(n: number): string {
  return `${n} dataset${n === 1 ? '' : 's'}`;
}

function describeGroup(g: TieGroup, generating: string): string {
  const verb = g.tied === g.count ? 'tied' : g.undecided === g.count ? 'undecided' : 'tied or undecided';
  if (verb === 'tied' && g.includesGenerating) return `tied with ${list(g.contenders.filter((m) => m !== generating))}`;
  return `${verb} between ${list(g.contenders)}`;
}

/** Columns other than `skip` that won any jobs of row i, most often first, as "name (x%)". */
function choices(c: ConfusionMatrix, i: number, skip: number | null): { name: string; share: number }[] {
  return c.columns
    .map((name, j) => ({ name, j, count: c.counts[i][j], share: c.rate[i][j] }))
    .filter((x) => x.j !== skip && x.count > 0)
    .sort((a, b) => b.count - a.count || a.j - b.j)
    .map(({ name, share }) => ({ name, share }));
}

export function verdictFor(c: ConfusionMatrix, i: number, chance: number): Verdict {
  const g = c.rows[i];
  const n = c.n[i];
  const make = (kind: VerdictKind, text: string): Verdict => ({ generating: g, kind, text });
  if (n === 0) return make('no-data', `${g}: no datasets`);
  if (c.failed[i] === n) return make('failed', `${g}: all ${datasets(n)} failed to fit`);

  const tail: string[] = [];
  const diag = c.diagonal[i];
  const undecidedShare = c.undecided[i] / n;

  if (diag === null) {
    const chosen = choices(c, i, null);
    const head = chosen.length
      ? `${g} (not a candidate): chosen as ${chosen.slice(0, 3).map((x) => `${x.name} in ${percent(x.share)}%`).join(', ')} of ${datasets(n)}`
      : `${g} (not a candidate): no model chosen in any of ${datasets(n)}`;
    if (c.undecided[i] > 0) tail.push(`${percent(undecidedShare)}% tied or undecided`);
    if (c.failed[i] > 0) tail.push(`${percent(c.failedRate[i])}% failed`);
    return make('not-candidate', [head, ...tail].join('; '));
  }

  const rec = c.recovered[i]!;
  if (undecidedShare >= NOT_IDENTIFIABLE_SHARE) {
    const top = c.ties[i][0];
    const head = `${g}: not identifiable under this design: ${percent(top.rate)}% of ${datasets(n)} ${describeGroup(top, g)}`;
    if (c.undecided[i] > top.count) tail.push(`${percent(undecidedShare)}% tied or undecided in all`);
    if (rec.successes > 0) tail.push(`recovered in ${percent(rec.estimate)}%`);
    if (c.failed[i] > 0) tail.push(`${percent(c.failedRate[i])}% failed`);
    return make('not-identifiable', [head, ...tail].join('; '));
  }

  const head = `${g}: recovered in ${percent(rec.estimate)}% [${percent(rec.lower)}, ${percent(rec.upper)}] of ${datasets(n)}`;
  const other = choices(c, i, diag);
  if (other.length) tail.push(`confused mostly with ${other[0].name} (${percent(other[0].share)}%)`);
  if (c.undecided[i] > 0) tail.push(`${percent(undecidedShare)}% tied or undecided`);
  if (c.failed[i] > 0) tail.push(`${percent(c.failedRate[i])}% failed`);
  // Chance only means something with a choice to make.
  if (c.columns.length > 1 && Number.isFinite(chance)) {
    if (rec.upper < chance) tail.push(`below chance (${percent(chance)}%)`);
    else if (rec.lower <= chance) tail.push(`interval includes chance (${percent(chance)}%)`);
  }
  return make('recovery', [head, ...tail].join('; '));
}

export function verdicts(c: ConfusionMatrix, chance: number): Verdict[] {
  return c.rows.map((_, i) => verdictFor(c, i, chance));
}
