/**
 * Ordering of job keys such as "gen=power/obs=0017/trials=240".
 *
 * Reference: lexicographic (tuple) order, D. E. Knuth, The Art of Computer
 * Programming vol. 3, Sorting and Searching (2nd ed., 1998), §5.2, with each
 * field compared as a number when both sides are numbers, so 'trials=240'
 * sorts before 'trials=1000' and 'obs=0017' as 17.
 *
 * Analysis sorts lines by this order before any floating-point sum, so a
 * summary does not depend on the order in which workers or shards wrote
 * jobs.jsonl. Strings compare by UTF-16 code units, not localeCompare, so
 * the order is the same on every machine whatever its locale.
 */
import type { JobLine } from './types.js';

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function compareStrings(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

function compareValues(a: string, b: string): number {
  const an = NUMBER.test(a);
  const bn = NUMBER.test(b);
  if (an && bn) {
    const d = Number(a) - Number(b);
    // '0017' and '17' are the same number; fall back to the text so the order stays total.
    return d !== 0 ? Math.sign(d) : compareStrings(a, b);
  }
  if (an !== bn) return an ? -1 : 1;
  return compareStrings(a, b);
}

function compareSegments(a: string, b: string): number {
  const ia = a.indexOf('=');
  const ib = b.indexOf('=');
  const na = ia < 0 ? a : a.slice(0, ia);
  const nb = ib < 0 ? b : b.slice(0, ib);
  return compareStrings(na, nb) || compareValues(ia < 0 ? '' : a.slice(ia + 1), ib < 0 ? '' : b.slice(ib + 1));
}

/** Total order on job keys: '/'-separated fields, each 'name=value', compared in turn. */
export function compareJobKeys(a: string, b: string): number {
  const sa = a.split('/');
  const sb = b.split('/');
  const common = Math.min(sa.length, sb.length);
  for (let i = 0; i < common; i++) {
    const c = compareSegments(sa[i], sb[i]);
    if (c !== 0) return c;
  }
  return sa.length - sb.length;
}

/**
 * A copy of the lines in job-key order. Two lines with the same key are an
 * error: which one to keep would depend on input order (e.g. a shard merged
 * twice), and keeping both would count one observer twice.
 */
export function sortJobLines(lines: readonly JobLine[]): JobLine[] {
  const sorted = [...lines].sort((a, b) => compareJobKeys(a.key, b.key));
  for (let k = 1; k < sorted.length; k++) {
    if (sorted[k].key === sorted[k - 1].key) throw new Error(`job key '${sorted[k].key}' appears more than once`);
  }
  return sorted;
}
