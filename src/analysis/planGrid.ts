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

interface Tally {
  correct: number;
  wrong: number;
  none: number;
  score: number;
}

/** Group verdicts of `count` resampled studies per cell, study i drawn with the stream of `${prefix}study=${i}`. */
function tallyStudies(pool: PlanPool, ns: readonly number[], o: GridOptions, count: number, prefix: string): Tally[][] {
  const maxN = ns[ns.length - 1];
  const nT = pool.trials.length;
  const tallies = ns.map(() => Array.from({ length: nT }, () => ({ correct: 0, wrong: 0, none: 0, score: 0 })));
  for (let i = 0; i < count; i++) {
    const drawn = drawStudy(pool, o.population, maxN, o.streamFor(`${prefix}study=${i}`)).map((d) => pool.byModel[d.model][d.index]);
    ns.forEach((n, a) => {
      for (let t = 0; t < nT; t++) {
        const rows: StudyRow[] = drawn.slice(0, n).map((p) => ({ evidence: p.evidence[t], winner: p.winner[t] }));
        const v = groupVerdict(rows, pool.candidates, o.majority, o.analysis);
        const tally = tallies[a][t];
        tally[v.kind]++;
        tally.score += v.score;
      }
    });
  }
  return tallies;
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

export function resampleGrid(pool: PlanPool, o: GridOptions): GridCell[] {
  for (const m of populationOrder(pool, o.population).models)
    if (!pool.byModel[m]?.length) throw new Error(`the pool has no usable participants of model '${m}'`);
  const ns = [...o.participants].sort((a, b) => a - b);
  const tallies = tallyStudies(pool, ns, o, o.resamples, '');
  const replicates = o.poolReplicates ?? 0;
  const perReplicate = Math.max(20, Math.ceil(o.resamples / Math.max(1, replicates)));
  const boot = Array.from({ length: replicates }, (_, b) => tallyStudies(redrawPool(pool, o.streamFor(`pool=${b}`)), ns, o, perReplicate, `pool=${b}/`));
  return ns.flatMap((n, a) =>
    pool.trials.map((trials, t) => {
      const c = tallies[a][t];
      const cell: GridCell = { participants: n, trials, studies: o.resamples, correct: proportion(c.correct, o.resamples), wrong: c.wrong, none: c.none, meanScore: c.score / o.resamples };
      if (replicates >= 2) cell.withPool = poolAwareInterval(c.correct, o.resamples, boot.map((r) => r[a][t].correct / perReplicate), perReplicate);
      return cell;
    }),
  );
}
