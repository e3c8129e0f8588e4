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
 * error given the pool, not the pool's own sampling error.
 */
import type { PlanPool } from './planPool.js';
import { groupVerdict, type GroupAnalysis, type StudyRow } from './groupConclusion.js';
import { proportion, type Proportion } from './wilson.js';

export interface GridOptions {
  participants: readonly number[];
  population: Readonly<Record<string, number>>;
  majority: string;
  analysis: GroupAnalysis;
  resamples: number;
  streamFor: (key: string) => () => number;
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

export function resampleGrid(pool: PlanPool, o: GridOptions): GridCell[] {
  for (const m of populationOrder(pool, o.population).models)
    if (!pool.byModel[m]?.length) throw new Error(`the pool has no usable participants of model '${m}'`);
  const ns = [...o.participants].sort((a, b) => a - b);
  const maxN = ns[ns.length - 1];
  const nT = pool.trials.length;
  const tallies = ns.map(() => Array.from({ length: nT }, () => ({ correct: 0, wrong: 0, none: 0, score: 0 })));
  for (let i = 0; i < o.resamples; i++) {
    const drawn = drawStudy(pool, o.population, maxN, o.streamFor(`study=${i}`)).map((d) => pool.byModel[d.model][d.index]);
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
  return ns.flatMap((n, a) =>
    pool.trials.map((trials, t) => {
      const c = tallies[a][t];
      return { participants: n, trials, studies: o.resamples, correct: proportion(c.correct, o.resamples), wrong: c.wrong, none: c.none, meanScore: c.score / o.resamples };
    }),
  );
}
