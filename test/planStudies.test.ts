/**
 * `lossprobe plan` on simulated participants (fixed seeds, in-process fits of
 * the closed-form Gaussian design in test/fixtures/plan-gaussian.yaml, so no
 * worker pool is needed and fits take milliseconds):
 *  - a population of one loss the design separates well (asymmetric-linear)
 *    reaches the target at small N;
 *  - the equivalent pair of the gaussian control (squared vs absolute: with a
 *    Gaussian prior and constant noise the posterior is symmetric, so mean =
 *    median; Gelman et al., Bayesian Data Analysis, ch. 2) never does, and the
 *    notes say why (tied evidence);
 *  - resampled studies agree with freshly simulated studies (new participants
 *    for every study) within Monte Carlo error at one (N, T) point.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { buildPool, type PlanPool } from '../src/analysis/planPool.js';
import { resampleGrid } from '../src/analysis/planGrid.js';
import { chooseDesign } from '../src/analysis/planChoice.js';
import { evidenceTies, poolUse } from '../src/analysis/planDiagnostics.js';
import { groupVerdict, type GroupAnalysis } from '../src/analysis/groupConclusion.js';
import type { JobLine } from '../src/analysis/types.js';
import { Z95 } from '../src/analysis/wilson.js';
import { loadPlan } from '../src/engine/planStudy.js';
import { jobKey } from '../src/engine/plan.js';
import { resolveStudy, type ResolvedStudy } from '../src/engine/resolve.js';
import { runJob } from '../src/engine/runJob.js';
import { streamFromKey } from '../src/numerics/rng.js';
import { planNotes, type PlanInputs } from '../src/report/planSummary.js';
import type { PlanSpec } from '../src/scenario/planSchema.js';

const FIXTURE = join(process.cwd(), 'test', 'fixtures', 'plan-gaussian.yaml');
const PXP: GroupAnalysis = { method: 'random-effects', rule: 'protected-exceedance', threshold: 0.95 };
const ALL = ['squared', 'absolute', 'asymmetric'];

/** The fixture's pool study with every model generating `observers` participants at `trials`, and its lines computed in-process. */
function poolStudy(models: string[], trials: number[], observers: number): ResolvedStudy {
  const s = loadPlan(FIXTURE).pool.scenario;
  return resolveStudy({ ...s, models: s.models.filter((m) => models.includes(m.name)), trials, generate: { ...s.generate, models, observers } }, FIXTURE);
}
function fitAll(study: ResolvedStudy, observers: number[], models = study.generating): JobLine[] {
  return models.flatMap((g) => observers.flatMap((o) => study.trialCounts.map((t) => runJob(study, jobKey(g, o, t)))));
}
const range = (from: number, n: number) => Array.from({ length: n }, (_, i) => from + i);
const stream = (tag: string) => (key: string) => streamFromKey(`plan-test/${tag}/${key}`);

function inputs(pool: PlanPool, plan: PlanSpec, majority: string, cells: ReturnType<typeof resampleGrid>): PlanInputs {
  return { name: 't', seed: 1, scenarioHash: 'x', toolVersion: 'test', plan, majority, pool, poolSize: 12, cells, choice: chooseDesign(cells, plan.target), ties: evidenceTies(pool, majority), poolUse: poolUse(pool, plan.population, plan.participants) };
}

describe('plan on the Gaussian design', () => {
  const TRIALS = [20, 40, 80];
  let lines: JobLine[];
  beforeAll(() => {
    lines = fitAll(poolStudy(ALL, TRIALS, 12), range(0, 12));
  });
  const poolOf = (generating: string[], candidates = ALL) =>
    buildPool(lines, { candidates, generating, trials: TRIALS, evidence: 'bic', criterion: 'bic', margin: 0 });

  it('a well-separated population (all asymmetric-linear) reaches the target at small N', () => {
    const pool = poolOf(['asymmetric']);
    expect(pool.byModel.asymmetric).toHaveLength(12);
    const cells = resampleGrid(pool, { participants: [4, 8, 16], population: { asymmetric: 1 }, majority: 'asymmetric', analysis: PXP, resamples: 200, streamFor: stream('separated') });
    const choice = chooseDesign(cells, 0.8);
    expect(choice.reached).toBe(true);
    expect(Math.min(...choice.frontier.map((c) => c.participants))).toBeLessThanOrEqual(8);
    // More trials never hurt here: at N = 16, P(correct) rises with T up to (nearly) 1.
    const n16 = cells.filter((c) => c.participants === 16).map((c) => c.correct.estimate);
    expect(n16[2]).toBeGreaterThanOrEqual(n16[0]);
    expect(n16[2]).toBeGreaterThan(0.95);
    // Nobody concludes for a wrong model.
    expect(cells.every((c) => c.wrong === 0)).toBe(true);
  });

  it('the equivalent pair (squared 70%, absolute 30%) never reaches the target, and the notes say why', () => {
    const pool = poolOf(['squared', 'absolute'], ['squared', 'absolute']);
    const plan: PlanSpec = { participants: [8, 32, 128], population: { squared: 0.7, absolute: 0.3 }, pool: 12, analysis: { method: 'random-effects', evidence: 'bic', rule: 'protected-exceedance', threshold: 0.95 }, target: 0.8, resamples: 100 };
    const cells = resampleGrid(pool, { participants: plan.participants, population: plan.population, majority: 'squared', analysis: PXP, resamples: 100, streamFor: stream('tied') });
    // Tied evidence keeps the protected exceedance near 1/2 at every N and T.
    for (const c of cells) expect(c.correct.estimate).toBeLessThan(0.05);
    const ties = evidenceTies(pool, 'squared');
    expect(ties).toHaveLength(1);
    expect(ties[0]).toMatchObject({ model: 'absolute', equivalent: true });
    const notes = planNotes(inputs(pool, plan, 'squared', cells)).join('\n');
    expect(notes).toMatch(/Tied evidence: squared and absolute/);
    expect(notes).toMatch(/because of the tied evidence/);
    // The control: the same checks do not call a separable pair equivalent.
    expect(evidenceTies(poolOf(['asymmetric']), 'asymmetric').find((t) => t.model === 'squared')?.equivalent).toBe(false);
  });
});

describe('resampled against freshly simulated studies', () => {
  it('agree within Monte Carlo error at N = 6, T = 40', () => {
    // Squared 75% vs asymmetric-linear 25%, rule: exceedance of squared > 0.9 — a
    // point where P(correct) is far from 0 and 1, so disagreement would show.
    const N = 6;
    const T = 40;
    const M = 80;
    const POOL = 30;
    const population = { squared: 0.75, asymmetric: 0.25 };
    const analysis: GroupAnalysis = { method: 'random-effects', rule: 'exceedance', threshold: 0.9 };
    const candidates = ['squared', 'asymmetric'];
    const study = poolStudy(candidates, [T], POOL);
    const opts = { candidates, generating: candidates, trials: [T], evidence: 'bic' as const, criterion: 'bic' as const, margin: 0 };
    // Resampled: a pool of observers 0..29 per model.
    const pool = buildPool(fitAll(study, range(0, POOL)), opts);
    const [cell] = resampleGrid(pool, { participants: [N], population, majority: 'squared', analysis, resamples: 2000, poolReplicates: 20, streamFor: stream('resampled') });
    // Fresh: M studies, each recruiting N brand-new participants (observers from 1000 on, never reused).
    const next: Record<string, number> = { squared: 1000, asymmetric: 1000 };
    const recruit = tracingRecruiter(candidates, population);
    let correct = 0;
    for (let i = 0; i < M; i++) {
      const rand = streamFromKey(`plan-test/fresh/study=${i}`);
      const rows = range(0, N).map(() => {
        const model = recruit(rand());
        const line = runJob(study, jobKey(model, next[model]++, T));
        const p = buildPool([line], { ...opts, generating: [model] }).byModel[model][0];
        return { evidence: p.evidence[0], winner: p.winner[0] };
      });
      if (groupVerdict(rows, candidates, 'squared', analysis).kind === 'correct') correct++;
    }
    const fresh = correct / M;
    const resampled = cell.correct.estimate;
    expect(resampled).toBeGreaterThan(0.1);
    expect(resampled).toBeLessThan(0.9);
    // Sampling error of the pool itself, by a bootstrap over the pool (Efron &
    // Tibshirani 1993, ch. 6): redraw each model's pool with replacement and resample again.
    const boot = range(0, 20).map((b) => {
      const r = streamFromKey(`plan-test/pool-bootstrap/${b}`);
      const byModel = Object.fromEntries(candidates.map((m) => [m, pool.byModel[m].map(() => pool.byModel[m][Math.floor(r() * pool.byModel[m].length)])]));
      return resampleGrid({ ...pool, byModel }, { participants: [N], population, majority: 'squared', analysis, resamples: 300, streamFor: stream(`boot-${b}`) })[0].correct.estimate;
    });
    const mean = boot.reduce((a, b) => a + b, 0) / boot.length;
    const poolVar = boot.reduce((a, b) => a + (b - mean) ** 2, 0) / (boot.length - 1);
    const p = (fresh + resampled) / 2;
    const se = Math.sqrt((p * (1 - p)) / M + (p * (1 - p)) / 2000 + poolVar);
    expect(Math.abs(fresh - resampled)).toBeLessThan(Z95 * se);
    // The tool's own pool-error estimate is of the same size as this bootstrap's (both from 20 replicates: within a factor of 3).
    expect(cell.withPool!.poolSd).toBeGreaterThan(Math.sqrt(poolVar) / 3);
    expect(cell.withPool!.poolSd).toBeLessThan(Math.sqrt(poolVar) * 3);
    // And the check can fail: the fresh studies would not match a mix that ignored the shares.
    const evenMix = resampleGrid(pool, { participants: [N], population: { squared: 0.5, asymmetric: 0.5 }, majority: 'squared', analysis, resamples: 2000, streamFor: stream('resampled') })[0];
    expect(Math.abs(fresh - evenMix.correct.estimate)).toBeGreaterThan(Z95 * se);
  }, 120_000);
});

/** The recruitment rule of a fresh study: a model by its population share, as drawStudy does. */
function tracingRecruiter(models: string[], population: Record<string, number>) {
  return (u: number) => {
    let acc = 0;
    for (const m of models) {
      acc += population[m];
      if (u < acc) return m;
    }
    return models[models.length - 1];
  };
}
