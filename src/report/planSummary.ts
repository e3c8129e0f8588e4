/**
 * The outputs of `lossprobe plan` after resampling: summary.json (a
 * versioned `plan` object), the tidy grid CSV, and the plain-words notes
 * (method, limits, warnings, why a target is out of reach) shared by the
 * terminal, the summary and the report.
 */
import { jsonSafe } from '../analysis/jsonSafe.js';
import { studyCost } from '../analysis/planChoice.js';
import { TIED_EVIDENCE } from '../analysis/planDiagnostics.js';
import type { GridCell } from '../analysis/planGrid.js';
import type { Costs } from '../analysis/planChoice.js';
import type { PlanSpec } from '../scenario/planSchema.js';
import { studySummary } from './studyOutputs.js';
import { csvTable } from './csv.js';
import type { ResolvedStudy } from '../engine/resolve.js';
import type { JobLine } from '../analysis/types.js';

export const PLAN_VERSION = 1;

export const PLAN_CAUTION =
  'A simulation holds only under its assumptions (the candidate models, the population shares and the parameter draws of the scenario). It complements, and does not replace, a pilot study and the advice of your local ethics board and statistician.';

export type { PlanResults as PlanInputs } from '../engine/planResults.js';
import type { PlanResults as PlanInputs } from '../engine/planResults.js';

const pct = (x: number) => `${Math.round(100 * x)}%`;

/** A P(correct) as a percentage: whole numbers, but one decimal within a point of the target, so 79.6% is never shown as a reaching "80%". */
export function percentNear(x: number | null, target: number): string {
  if (x === null || !Number.isFinite(x)) return '–';
  return Math.abs(x - target) < 0.01 && x !== target ? `${(100 * x).toFixed(1)}%` : `${Math.round(100 * x)}%`;
}

export function describeAnalysis(plan: PlanSpec, majority: string): string {
  const a = plan.analysis;
  if (a.method === 'random-effects') {
    const ev = a.evidence === 'cv' ? 'cross-validated log-likelihood' : `−${a.evidence.toUpperCase()}/2`;
    const what = a.rule === 'protected-exceedance' ? 'protected exceedance probability' : 'exceedance probability';
    return `random-effects model selection on ${ev} per participant; the conclusion is correct when ${majority} (the true majority model) has ${what} above ${a.threshold}`;
  }
  const share = a.minimumShare > 0 ? ` and more than ${pct(a.minimumShare)} of all participants` : '';
  return `count of per-participant winners; the conclusion is correct when ${majority} (the true majority model) wins more participants than any other model${share}`;
}

function population(plan: PlanSpec, candidates: readonly string[]): string {
  return candidates
    .filter((c) => (plan.population[c] ?? 0) > 0)
    .map((c) => `${c} ${pct(plan.population[c])}`)
    .join(', ');
}

/** Plain-words notes, most important first. */
export function planNotes(x: PlanInputs): string[] {
  const notes: string[] = [];
  const models = x.pool.candidates.filter((c) => (x.plan.population[c] ?? 0) > 0);
  const usable = models.map((m) => `${x.pool.byModel[m].length} ${m}`).join(', ');
  notes.push(
    `Each simulated study recruits N participants independently from the population (${population(x.plan, x.pool.candidates)}) and takes each one, with replacement, from a pool of simulated participants fitted at every trial count (${usable}): a study is a resample of simulated participants, not a fresh simulation.`,
  );
  const maxN = Math.max(...x.plan.participants);
  const largest = x.poolUse.filter((u) => u.participants === maxN);
  const replicates = x.plan.poolReplicates >= 2 && x.cells[0]?.withPool;
  notes.push(
    `Studies share participants, so the Wilson intervals of the resampling cover only its error given this pool. ${
      replicates
        ? `The intervals in the table also count the pool's own sampling error, estimated from ${x.plan.poolReplicates} bootstrap replicates of the pool; both kinds are in summary.json and plan.csv, and both remain optimistic when N is large relative to the pool.`
        : `The pool's own sampling error is not counted (plan.poolReplicates is 0); the intervals are optimistic, the more so the larger N is relative to the pool.`
    } The largest study (N = ${maxN}) draws on average ${largest
      .map((u) => `${u.expectedDraws.toFixed(1)} of ${u.pool} ${u.model} (${pct(u.distinctShare)} distinct)`)
      .join(', ')}.`,
  );
  const warned = [...new Set(x.poolUse.filter((u) => u.warn).map((u) => u.participants))];
  if (warned.length)
    notes.push(
      `Warning: at N = ${warned.join(', ')} a study draws at least half of some model's pool; P(correct) there is likely optimistic. Enlarge the pool (plan.pool or --pool) to at least twice the largest N × share.`,
    );
  const excluded = Object.entries(x.pool.excluded).filter(([, n]) => n > 0);
  if (excluded.length) notes.push(`Left out of the pool because a fit failed at some trial count: ${excluded.map(([m, n]) => `${n} ${m}`).join(', ')}.`);
  const tMax = x.pool.trials[x.pool.trials.length - 1];
  const equivalent = x.ties.filter((t) => t.equivalent);
  for (const t of equivalent) {
    const growth = x.pool.trials.map((tr, i) => `${t.medianDifference[i].toFixed(2)} at ${tr}`).join(', ');
    notes.push(
      `Tied evidence: ${x.majority} and ${t.model} receive the same evidence (|difference| < ${TIED_EVIDENCE}) for ${pct(t.tiedShare[t.tiedShare.length - 1])} of simulated participants at ${tMax} trials (median |difference| ${growth} trials). This design cannot tell them apart, so no number of participants or trials lets the group analysis single out ${x.majority}.`,
    );
  }
  const c = x.choice;
  const bi = c.best.withPool ?? c.best.correct;
  const best = `${percentNear(c.best.correct.estimate, c.target)} [${pct(bi.lower)}–${pct(bi.upper)}] at N = ${c.best.participants}, T = ${c.best.trials}`;
  if (!c.reached) {
    let why: string;
    if (equivalent.length) why = `because of the tied evidence above`;
    else if (c.best.wrong / c.best.studies >= 0.2)
      why = `and ${pct(c.best.wrong / c.best.studies)} of studies there name another model: per-participant fits favour the wrong model often enough to mislead the group analysis (see the confusion matrix of the pool in summary.json)`;
    else why = `more participants or trials than the grid holds are needed (or a design that separates the models better)`;
    notes.push(`No (N, T) in the grid reaches the target ${pct(c.target)}; the best is ${best}, ${why}.`);
  } else if (c.borderline.length) {
    notes.push(
      `Borderline: ${c.borderline.map((b) => `N = ${b.participants}, T = ${b.trials}`).join('; ')} reach the target by estimate but the interval still extends below it; more resamples (--resamples) or a larger pool (--pool) would settle this.`,
    );
  }
  return notes;
}

/** The `plan` object of summary.json (versioned on its own). */
export function planObject(x: PlanInputs) {
  const costs: Costs | undefined = x.plan.cost;
  const cellOut = (cell: GridCell) => ({
    participants: cell.participants,
    trials: cell.trials,
    studies: cell.studies,
    correct: cell.correct,
    correctWithPoolError: cell.withPool ?? null,
    wrongConclusion: cell.wrong,
    noConclusion: cell.none,
    meanMajorityScore: cell.meanScore,
    reachesTarget: cell.correct.estimate >= x.plan.target,
    ...(costs ? { cost: studyCost(cell, costs) } : {}),
  });
  const pair = (cell: GridCell) => ({ participants: cell.participants, trials: cell.trials, probability: cell.correct.estimate, ...(costs ? { cost: studyCost(cell, costs) } : {}) });
  return jsonSafe({
      version: PLAN_VERSION,
      models: x.pool.candidates,
      population: x.plan.population,
      majorityModel: x.majority,
      analysis: x.plan.analysis,
      correctConclusion: describeAnalysis(x.plan, x.majority),
      target: x.plan.target,
      resamples: x.plan.resamples,
      poolReplicates: x.plan.poolReplicates,
      participants: [...x.plan.participants].sort((a, b) => a - b),
      trials: x.pool.trials,
      cost: costs ?? null,
      pool: {
        evidence: x.pool.evidenceKind,
        simulatedPerModel: x.poolSize,
        usable: Object.fromEntries(Object.entries(x.pool.byModel).map(([m, ps]) => [m, ps.length])),
        excluded: x.pool.excluded,
      },
      grid: x.cells.map(cellOut),
      choice: {
        targetReached: x.choice.reached,
        cheapest: x.choice.cheapest ? pair(x.choice.cheapest.cell) : null,
        frontier: x.choice.frontier.map(pair),
        best: pair(x.choice.best),
        borderline: x.choice.borderline.map(pair),
      },
      tiedEvidence: x.ties.map((t) => ({ model: t.model, trials: x.pool.trials, tiedShare: t.tiedShare, medianDifference: t.medianDifference, equivalent: t.equivalent })),
      poolUse: x.poolUse,
      notes: planNotes(x),
      caution: PLAN_CAUTION,
  });
}

/**
 * summary.json of a plan folder: the pool's recovery summary (the contract
 * every run folder keeps, so reports and scripts read it as usual) plus the
 * `plan` object.
 */
export function planSummary(pool: ResolvedStudy, lines: readonly JobLine[], x: PlanInputs) {
  return { ...studySummary(pool, lines, x.toolVersion), plan: planObject(x) };
}

export type PlanSummary = ReturnType<typeof planSummary>;

/** One row per (participants, trials) cell. */
export function planCsv(x: PlanInputs): string {
  const costs = x.plan.cost;
  return csvTable(
    ['participants', 'trials', 'studies', 'correct', 'p_correct', 'lower_95', 'upper_95', 'lower_95_with_pool', 'upper_95_with_pool', 'effective_studies', 'pool_sd', 'wrong_conclusion', 'no_conclusion', 'mean_majority_score', 'reaches_target', 'cost'],
    x.cells.map((c) => [
      c.participants,
      c.trials,
      c.studies,
      c.correct.successes,
      c.correct.estimate,
      c.correct.lower,
      c.correct.upper,
      c.withPool?.lower ?? null,
      c.withPool?.upper ?? null,
      c.withPool?.effectiveStudies ?? null,
      c.withPool?.poolSd ?? null,
      c.wrong,
      c.none,
      c.meanScore,
      c.correct.estimate >= x.plan.target,
      costs ? studyCost(c, costs) : null,
    ]),
  );
}
