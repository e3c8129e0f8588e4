/**
 * Confusion matrix of a model-recovery study: rows are generating models,
 * columns the candidate chosen, with ties, undecided comparisons and failures
 * kept apart so that they are never credited to any model.
 *
 * Reference: R. C. Wilson & A. G. E. Collins (2019), "Ten simple rules for
 * the computational modeling of behavioral data", eLife 8:e49547 (rule 6 and
 * Box 2: the confusion matrix p(fit model | simulated model)); balanced
 * accuracy as the mean of per-class recall after K. H. Brodersen, C. S. Ong,
 * K. E. Stephan & J. M. Buhmann (2010), "The balanced accuracy and its
 * posterior distribution", ICPR 2010, 3121–3124.
 *
 * Rates are normalised by ALL jobs of a row, including undecided and failed
 * ones: a design that leaves 90% of datasets tied has recovered the truth in
 * at most 10% of them, and the report must not hide that by dropping them.
 */
import type { JobLine } from './types.js';
import { jobOutcome, type OutcomeOptions } from './outcome.js';
import { proportion, type Interval, type Proportion } from './wilson.js';
import { moverMean } from './mover.js';

/** One set of models that a row's comparisons could not separate. */
export interface TieGroup {
  /** In candidate order. */
  contenders: string[];
  /** Jobs with exactly this contender set (tied + undecided). */
  count: number;
  /** Of which the models were within the tie tolerance... */
  tied: number;
  /** ...and of which only within the user's margin. */
  undecided: number;
  /** count / row jobs. */
  rate: number;
  /** Whether the generating model is among the contenders. */
  includesGenerating: boolean;
}

export interface ConfusionMatrix {
  /** Generating models, in the order given. */
  rows: string[];
  /** Candidate models, in the order given. */
  columns: string[];
  /** Jobs per row (won + undecided + failed). */
  n: number[];
  /** counts[i][j]: jobs of generating model i won by candidate j. */
  counts: number[][];
  /** counts / n, and their 95% Wilson limits. */
  rate: number[][];
  lower: number[][];
  upper: number[][];
  /** Per row: jobs whose comparison was tied or undecided. */
  undecided: number[];
  undecidedRate: number[];
  /** Per row: jobs that failed, or whose comparison failed. */
  failed: number[];
  failedRate: number[];
  /** Column of the generating model among the candidates; null when it is not a candidate. */
  diagonal: (number | null)[];
  /** Per row: the diagonal proportion with its interval; null without a diagonal. */
  recovered: (Proportion | null)[];
  /** Per row: contender sets, most frequent first. */
  ties: TieGroup[][];
  /** Jobs decided afresh from their fits (another criterion or candidate set than stored). */
  redecided: number;
}

function checkDistinct(ids: readonly string[], what: string): void {
  const seen = new Set<string>();
  for (const id of ids) {
    if (seen.has(id)) throw new Error(`${what} lists '${id}' twice`);
    seen.add(id);
  }
}

export function confusionMatrix(
  lines: readonly JobLine[],
  candidates: readonly string[],
  generating: readonly string[],
  options: OutcomeOptions = {},
): ConfusionMatrix {
  checkDistinct(candidates, 'candidates');
  checkDistinct(generating, 'generating models');
  if (candidates.length === 0) throw new Error('at least one candidate model is needed');
  const rowOf = new Map(generating.map((g, i) => [g, i] as const));
  const colOf = new Map(candidates.map((c, j) => [c, j] as const));
  const R = generating.length;
  const C = candidates.length;
  const n = new Array<number>(R).fill(0);
  const counts = generating.map(() => new Array<number>(C).fill(0));
  const undecided = new Array<number>(R).fill(0);
  const failed = new Array<number>(R).fill(0);
  const groups = generating.map(() => new Map<string, { contenders: string[]; tied: number; undecided: number }>());
  let redecided = 0;

  for (const line of lines) {
    const i = rowOf.get(line.generating);
    // Dropping such a line silently would change every rate; the caller filters on purpose instead.
    if (i === undefined) throw new Error(`job ${line.key}: generating model '${line.generating}' is not in the list of generating models`);
    const o = jobOutcome(line, candidates, options);
    if (o.redecided) redecided++;
    n[i]++;
    if (o.kind === 'won') counts[i][colOf.get(o.winner)!]++;
    else if (o.kind === 'failed') failed[i]++;
    else {
      undecided[i]++;
      const id = JSON.stringify(o.contenders);
      const g = groups[i].get(id) ?? { contenders: o.contenders, tied: 0, undecided: 0 };
      g[o.kind]++;
      groups[i].set(id, g);
    }
  }

  const rate = counts.map((row, i) => row.map((c) => proportion(c, n[i])));
  const diagonal = generating.map((g) => colOf.get(g) ?? null);
  const ties = groups.map((m, i) =>
    [...m.values()]
      .map((g) => ({
        contenders: g.contenders,
        count: g.tied + g.undecided,
        tied: g.tied,
        undecided: g.undecided,
        rate: (g.tied + g.undecided) / n[i],
        includesGenerating: g.contenders.includes(generating[i]),
      }))
      // Most frequent first; equal counts by contender positions, so the order never depends on input order.
      .sort((a, b) => b.count - a.count || compareIndexLists(a.contenders.map((c) => colOf.get(c)!), b.contenders.map((c) => colOf.get(c)!))),
  );
  return {
    rows: [...generating],
    columns: [...candidates],
    n,
    counts,
    rate: rate.map((row) => row.map((p) => p.estimate)),
    lower: rate.map((row) => row.map((p) => p.lower)),
    upper: rate.map((row) => row.map((p) => p.upper)),
    undecided,
    undecidedRate: undecided.map((u, i) => (n[i] > 0 ? u / n[i] : NaN)),
    failed,
    failedRate: failed.map((f, i) => (n[i] > 0 ? f / n[i] : NaN)),
    diagonal,
    recovered: diagonal.map((j, i) => (j === null ? null : rate[i][j])),
    ties,
    redecided,
  };
}

function compareIndexLists(a: readonly number[], b: readonly number[]): number {
  for (let k = 0; k < Math.min(a.length, b.length); k++) if (a[k] !== b[k]) return a[k] - b[k];
  return a.length - b.length;
}

/**
 * Fraction of jobs won by their generating model, over the rows whose
 * generating model is a candidate (a non-candidate can never be recovered,
 * so its rows would only dilute the figure). Undecided and failed jobs count
 * as not recovered. 95% Wilson interval.
 */
export function overallAccuracy(c: ConfusionMatrix): Proportion {
  let hits = 0;
  let total = 0;
  c.diagonal.forEach((j, i) => {
    if (j === null) return;
    hits += c.counts[i][j];
    total += c.n[i];
  });
  return proportion(hits, total);
}

export interface BalancedAccuracy extends Interval {
  /** Rows averaged: generating models that are candidates and have at least one job. */
  rows: number;
}

/**
 * Mean of the per-row recovery rates, so a generating model with many jobs
 * does not outweigh one with few. 95% interval by MOVER (Zou & Donner 2008)
 * from the rows' Wilson intervals, treating rows as independent binomials.
 */
export function balancedAccuracy(c: ConfusionMatrix): BalancedAccuracy {
  const rows = c.recovered.filter((p): p is Proportion => p !== null && p.n > 0);
  if (rows.length === 0) return { estimate: NaN, lower: NaN, upper: NaN, rows: 0 };
  return { ...moverMean(rows), rows: rows.length };
}

/** Recovery rate of an observer that picks a candidate at random. */
export function chanceLevel(candidates: readonly string[]): number {
  return candidates.length > 0 ? 1 / candidates.length : NaN;
}
