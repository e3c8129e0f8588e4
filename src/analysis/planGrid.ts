/**
 * P(correct group conclusion) over a participants × trials grid, by
 * resampling whole studies from the participant pool.
 *
 * A simulated study of N participants recruits each participant
 * independently from the population: its model is drawn with the
 * population's shares (so the study's mix varies as a real sample's would),
 * then one simulated participant of that model is drawn uniformly, with
 * replacement, from the pool (a bootstrap from the pool; Efron & Tibshirani
 * 1993, An Introduction to the Bootstrap, ch. 6). The same participants are
 * used at every trial count (their nested trial prefixes), and the study of
 * N participants is the first N of the largest study drawn with the same
 * stream (common random numbers), so neighbouring cells differ by design, not
 * by draw noise. Study i's stream depends only on the key given to
 * `streamFor` (the caller derives it from the master seed), never on worker
 * count or order.
 *
 * Each cell's proportion carries a Wilson 95% interval (Wilson 1927, JASA
 * 22:209–212) over the resamples: it measures resampling (Monte Carlo)
 * error given the pool, not the pool's own sampling error. With pool
 * replicates, a second interval also counts the pool's sampling error (see
 * poolAwareInterval below).
 */
import type { PlanPool } from './planPool.js';
import { groupVerdict, type GroupAnalysis, type StudyRow } from './groupConclusion.js';
import { proportion, wilsonInterval, type Proportion } from './wilson.js';

export interface GridOptions {
  participants: readonly number[];
  population: Readonly<Record<string, number>>;
  majority: string;
  analysis: GroupAnalysis;
  resamples: number;
  /** Bootstrap replicates of the pool for the pool-aware interval (0 or absent: none). Each replicate resamples resamples/replicates studies (at least 20). */
  poolReplicates?: number;
  streamFor: (key: string) => () => number;
}

export interface PoolAwareInterval {
  estimate: number;
  lower: number;
  upper: number;
  /** Studies the resampled ones are worth once the pool's sampling error is counted. */
  effectiveStudies: number;
  /** Estimated standard deviation of P(correct) from the pool's sampling error alone. */
  poolSd: number;
}

export interface GridCell {
  participants: number;
  trials: number;
  studies: number;
  /** Share of studies whose conclusion names the true majority model, with its Wilson interval. */
  correct: Proportion;
  /** Studies whose conclusion names another model. */
  wrong: number;
  /** Studies where no model meets the rule. */
  none: number;
  /** Mean over studies of the majority model's score (exceedance probability or share won). */
  meanScore: number;
  /** The interval widened for the pool's own sampling error, when pool replicates were asked for. */
  withPool?: PoolAwareInterval;
}

/** Population models with a positive share, in candidate order, and their shares. */
export function populationOrder(pool: PlanPool, population: Readonly<Record<string, number>>): { models: string[]; shares: number[] } {
  const models = pool.candidates.filter((c) => (population[c] ?? 0) > 0);
  return { models, shares: models.map((m) => population[m]) };
}

function drawIndex(shares: readonly number[], u: number): number {
  let acc = 0;
  for (let i = 0; i < shares.length; i++) {
    acc += shares[i];
    if (u < acc) return i;
  }
  return shares.length - 1;
}

/** The participants of resampled study i: [model, pool index] for the largest N. */
export function drawStudy(pool: PlanPool, population: Readonly<Record<string, number>>, size: number, rand: () => number): { model: string; index: number }[] {
  const { models, shares } = populationOrder(pool, population);
  const out: { model: string; index: number }[] = [];
  for (let j = 0; j < size; j++) {
    const model = models[drawIndex(shares, rand())];
    const available = pool.byModel[model].length;
    out.push({ model, index: Math.min(available - 1, Math.floor(rand() * available)) });
  }
  return out;
}

/** The pool redrawn with replacement within each model (one bootstrap replicate of the pool). */
function redrawPool(pool: PlanPool, rand: () => number): PlanPool {
  const byModel: PlanPool['byModel'] = {};
  for (const m of Object.keys(pool.byModel).sort()) {
    const ps = pool.byModel[m];
    byModel[m] = ps.map(() => ps[Math.min(ps.length - 1, Math.floor(rand() * ps.length))]);
  }
  return { ...pool, byModel };
}

/**
 * The interval widened for the pool's own sampling error. The pool is redrawn
 * B times (bootstrap replicates), each replicate gives P(correct) from its own
 * resampled studies, and the spread between replicates beyond their binomial
 * resampling noise estimates the pool's variance. Resampling and pool variance
 * together give an effective number of studies n_eff = p(1−p)/variance (the
 * design effect of Kish 1965, Survey Sampling, §8.2), and the Wilson interval
 * is taken at n_eff. p is shrunk as (s+2)/(n+4) (Agresti & Coull 1998, The
 * American Statistician 52:119–126) inside the ratio so cells at 0 or 1 keep
 * a sensible width.
 */
export function poolAwareInterval(successes: number, n: number, replicates: number[], perReplicate: number): PoolAwareInterval {
  const b = replicates.length;
  const mean = replicates.reduce((s, x) => s + x, 0) / b;
  const between = replicates.reduce((s, x) => s + (x - mean) ** 2, 0) / (b - 1);
  // E[p̂(1−p̂)] = p(1−p)(1 − 1/m) for m studies, so p(1−p)/m ≈ mean p̂(1−p̂)/(m − 1).
  const noise = replicates.reduce((s, x) => s + x * (1 - x), 0) / b / (perReplicate - 1);
  const poolVariance = Math.max(0, between - noise);
  const shrunk = (successes + 2) / (n + 4);
  const base = shrunk * (1 - shrunk);
  const effective = Math.min(n, Math.max(1, base / (base / n + poolVariance)));
  const w = wilsonInterval((successes / n) * effective, effective);
  return { estimate: successes / n, lower: w.lower, upper: w.upper, effectiveStudies: effective, poolSd: Math.sqrt(poolVariance) };
}

/** A slice of the resampled studies: studies [from, to) drawn from the pool itself (replicate null) or from bootstrap replicate b of it. */
export interface StudyBatch {
  replicate: number | null;
  from: number;
  to: number;
}

/** Verdicts of a batch, study-major then cell (participants-major, then trials): kind code (0 correct, 1 wrong, 2 none) and majority score. */
export interface BatchVerdicts {
  kinds: Uint8Array;
  scores: Float64Array;
}

export type VerdictOptions = Omit<GridOptions, 'resamples' | 'poolReplicates'>;

const KIND_CODE = { correct: 0, wrong: 1, none: 2 } as const;

/** Studies per replicate of the pool: the resamples spread over the replicates, at least 20 each. */
export const studiesPerReplicate = (o: Pick<GridOptions, 'resamples' | 'poolReplicates'>) => Math.max(20, Math.ceil(o.resamples / Math.max(1, o.poolReplicates ?? 0)));

/** Every batch of a grid, in study order: the pool's own studies first, then each replicate's. */
export function studyBatches(o: Pick<GridOptions, 'resamples' | 'poolReplicates'>, size = 50): StudyBatch[] {
  const out: StudyBatch[] = [];
  const add = (replicate: number | null, count: number) => {
    for (let from = 0; from < count; from += size) out.push({ replicate, from, to: Math.min(count, from + size) });
  };
  add(null, o.resamples);
  const replicates = (o.poolReplicates ?? 0) >= 2 ? o.poolReplicates! : 0;
  for (let b = 0; b < replicates; b++) add(b, studiesPerReplicate(o));
  return out;
}

/** The group verdicts of one batch: a pure function of the pool, the options and the batch, wherever it runs. */
export function batchVerdicts(pool: PlanPool, o: VerdictOptions, batch: StudyBatch): BatchVerdicts {
  for (const m of populationOrder(pool, o.population).models)
    if (!pool.byModel[m]?.length) throw new Error(`the pool has no usable participants of model '${m}'`);
  const source = batch.replicate === null ? pool : redrawPool(pool, o.streamFor(`pool=${batch.replicate}`));
  const prefix = batch.replicate === null ? '' : `pool=${batch.replicate}/`;
  const ns = [...o.participants].sort((a, b) => a - b);
  const maxN = ns[ns.length - 1];
  const nT = pool.trials.length;
  const cells = ns.length * nT;
  const kinds = new Uint8Array((batch.to - batch.from) * cells);
  const scores = new Float64Array(kinds.length);
  for (let i = batch.from; i < batch.to; i++) {
    const drawn = drawStudy(source, o.population, maxN, o.streamFor(`${prefix}study=${i}`)).map((d) => source.byModel[d.model][d.index]);
    ns.forEach((n, a) => {
      for (let t = 0; t < nT; t++) {
        const rows: StudyRow[] = drawn.slice(0, n).map((p) => ({ evidence: p.evidence[t], winner: p.winner[t] }));
        const v = groupVerdict(rows, pool.candidates, o.majority, o.analysis);
        const at = (i - batch.from) * cells + a * nT + t;
        kinds[at] = KIND_CODE[v.kind];
        scores[at] = v.score;
      }
    });
  }
  return { kinds, scores };
}

/** The grid from the verdicts of every batch of studyBatches(o), added up in study order (so the sums do not depend on who computed which batch). */
export function gridFromVerdicts(pool: PlanPool, o: Omit<GridOptions, 'streamFor'>, batches: readonly StudyBatch[], verdicts: readonly BatchVerdicts[]): GridCell[] {
  const ns = [...o.participants].sort((a, b) => a - b);
  const nT = pool.trials.length;
  const cells = ns.length * nT;
  const replicates = (o.poolReplicates ?? 0) >= 2 ? o.poolReplicates! : 0;
  const counts = Array.from({ length: cells }, () => [0, 0, 0]);
  const score = new Array<number>(cells).fill(0);
  const bootCorrect = Array.from({ length: replicates }, () => new Array<number>(cells).fill(0));
  batches.forEach((batch, k) => {
    const v = verdicts[k];
    for (let i = 0; i < batch.to - batch.from; i++)
      for (let c = 0; c < cells; c++) {
        const kind = v.kinds[i * cells + c];
        if (batch.replicate === null) {
          counts[c][kind]++;
          score[c] += v.scores[i * cells + c];
        } else if (kind === 0) bootCorrect[batch.replicate][c]++;
      }
  });
  const perReplicate = studiesPerReplicate(o);
  return ns.flatMap((n, a) =>
    pool.trials.map((trials, t) => {
      const c = a * nT + t;
      const [correct, wrong, none] = counts[c];
      const cell: GridCell = { participants: n, trials, studies: o.resamples, correct: proportion(correct, o.resamples), wrong, none, meanScore: score[c] / o.resamples };
      if (replicates) cell.withPool = poolAwareInterval(correct, o.resamples, bootCorrect.map((r) => r[c] / perReplicate), perReplicate);
      return cell;
    }),
  );
}

/** P(correct) over the grid, computed here in one thread. */
export function resampleGrid(pool: PlanPool, o: GridOptions): GridCell[] {
  const batches = studyBatches(o);
  return gridFromVerdicts(pool, o, batches, batches.map((b) => batchVerdicts(pool, o, b)));
}
