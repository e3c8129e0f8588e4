/**
 * The pure parts of `lossprobe plan` (src/analysis/plan*.ts,
 * groupConclusion.ts, src/report/planHeatmap.ts): group verdicts on
 * hand-made evidence tables, the participant draw against the multinomial
 * law, occupancy against exact enumeration, the design choice as a
 * property-based test, and the target contour.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { groupVerdict, type GroupAnalysis, type StudyRow } from '../src/analysis/groupConclusion.js';
import { chooseDesign, studyCost } from '../src/analysis/planChoice.js';
import { drawStudy, poolAwareInterval, resampleGrid, type GridCell } from '../src/analysis/planGrid.js';
import { poolUse } from '../src/analysis/planDiagnostics.js';
import type { PlanPool, PoolParticipant } from '../src/analysis/planPool.js';
import { proportion, wilsonInterval } from '../src/analysis/wilson.js';
import { streamFromKey } from '../src/numerics/rng.js';
import { targetContour } from '../src/report/planHeatmap.js';
import { percentNear, planNotes } from '../src/report/planSummary.js';
import type { PlanSpec } from '../src/scenario/planSchema.js';

const FC = { seed: 8080, numRuns: 200 };
const PXP: GroupAnalysis = { method: 'random-effects', rule: 'protected-exceedance', threshold: 0.95 };
const row = (evidence: number[], winner: string | null = null): StudyRow => ({ evidence, winner });

describe('group verdict', () => {
  const models = ['a', 'b'];
  it('random effects: every participant strongly favouring the majority model gives a correct conclusion', () => {
    // Rigoux et al. (2014): with decisive evidence for one model in every
    // participant the protected exceedance probability tends to 1.
    const v = groupVerdict(Array.from({ length: 20 }, () => row([0, -50])), models, 'a', PXP);
    expect(v.kind).toBe('correct');
    expect(v.score).toBeGreaterThan(0.99);
  });
  it('random effects: identical evidence for both models concludes nothing (protected exceedance 1/K)', () => {
    // Identical evidence: the omnibus risk is high and PXP → 1/K (Rigoux et al. 2014, §2.3).
    const v = groupVerdict(Array.from({ length: 40 }, () => row([-100, -100])), models, 'a', PXP);
    expect(v.kind).toBe('none');
    expect(v.score).toBeGreaterThan(0.4);
    expect(v.score).toBeLessThan(0.6);
  });
  it('random effects: decisive evidence for the other model is a wrong conclusion', () => {
    const v = groupVerdict(Array.from({ length: 20 }, () => row([-50, 0])), models, 'a', PXP);
    expect(v.kind).toBe('wrong');
    expect(v.score).toBeLessThan(0.01);
  });
  it('winner count: plurality, ties and the minimum share', () => {
    const count: GroupAnalysis = { method: 'winner-count', minimumShare: 0 };
    const rows = (ws: (string | null)[]) => ws.map((w) => row([0, 0], w));
    expect(groupVerdict(rows(['a', 'a', 'b', null]), models, 'a', count)).toEqual({ kind: 'correct', score: 0.5 });
    expect(groupVerdict(rows(['a', 'b', null]), models, 'a', count).kind).toBe('none');
    expect(groupVerdict(rows(['b', 'b', 'a']), models, 'a', count).kind).toBe('wrong');
    // 2 of 4 is not more than half of all participants.
    expect(groupVerdict(rows(['a', 'a', 'b', null]), models, 'a', { method: 'winner-count', minimumShare: 0.5 }).kind).toBe('none');
  });
});

/** A pool whose participants carry only their own index as evidence, to trace draws. */
function tracingPool(sizes: Record<string, number>): PlanPool {
  const byModel: Record<string, PoolParticipant[]> = {};
  for (const [m, n] of Object.entries(sizes))
    byModel[m] = Array.from({ length: n }, (_, i) => ({ generating: m, observer: i, evidence: [[0, 0]], winner: [m] }));
  return { candidates: Object.keys(sizes), trials: [100], evidenceKind: 'bic', byModel, excluded: {} };
}

describe('resampled studies', () => {
  it('recruit each model with its population share (multinomial law) and every pool member alike', () => {
    const pool = tracingPool({ a: 5, b: 5 });
    const rand = streamFromKey('plan-test/shares');
    const draws = Array.from({ length: 40 }, () => drawStudy(pool, { a: 0.7, b: 0.3 }, 100, rand)).flat();
    const a = draws.filter((d) => d.model === 'a');
    // 4000 independent Bernoulli(0.7) recruitments: 0.7 must lie in the 99.9% Wilson interval (Wilson 1927).
    const share = wilsonInterval(a.length, draws.length, 3.29);
    expect(share.lower).toBeLessThan(0.7);
    expect(share.upper).toBeGreaterThan(0.7);
    // Pool members of a model are equally likely: each of 5 within its 99.9% interval around 1/5.
    for (let i = 0; i < 5; i++) {
      const w = wilsonInterval(a.filter((d) => d.index === i).length, a.length, 3.29);
      expect(w.lower).toBeLessThan(0.2);
      expect(w.upper).toBeGreaterThan(0.2);
    }
  });

  it('the study of N participants is the first N of the largest study, and results repeat exactly', () => {
    const pool = tracingPool({ a: 7, b: 7 });
    const opts = { participants: [3, 9], population: { a: 0.6, b: 0.4 }, majority: 'a', analysis: { method: 'winner-count', minimumShare: 0 } as GroupAnalysis, resamples: 50 };
    const one = resampleGrid(pool, { ...opts, streamFor: (k) => streamFromKey(`t/${k}`) });
    const two = resampleGrid(pool, { ...opts, participants: [9, 3], streamFor: (k) => streamFromKey(`t/${k}`) });
    expect(two).toEqual(one);
    const big = drawStudy(pool, opts.population, 9, streamFromKey('t/study=3'));
    const small = drawStudy(pool, opts.population, 3, streamFromKey('t/study=3'));
    expect(big.slice(0, 3)).toEqual(small);
  });

  it('expected distinct share of pool draws matches exact enumeration (occupancy)', () => {
    // Pool of 3, 2 draws: 9 equally likely ordered pairs, 3 with a repeat → E[distinct] = (3·1 + 6·2)/9 = 5/3, share 5/6.
    const pool = tracingPool({ a: 3 });
    const use = poolUse(pool, { a: 1 }, [2]);
    expect(use[0].distinctShare).toBeCloseTo(5 / 6, 12);
    expect(use[0].warn).toBe(true);
    expect(poolUse(tracingPool({ a: 30 }), { a: 1 }, [2])[0].warn).toBe(false);
  });
});

const cell = (participants: number, trials: number, p: number): GridCell => ({
  participants,
  trials,
  studies: 1000,
  correct: proportion(Math.round(p * 1000), 1000),
  wrong: 0,
  none: 1000 - Math.round(p * 1000),
  meanScore: p,
});

describe('pool-aware interval', () => {
  it('equals the Wilson interval when the pool replicates agree beyond doubt, and widens with their spread', () => {
    // Replicates spread exactly as binomial noise predicts → no pool variance → n_eff = n (Kish 1965 design effect 1).
    const same = poolAwareInterval(300, 1000, [0.3, 0.3, 0.3, 0.3], 50);
    const wilson = wilsonInterval(300, 1000);
    expect(same.poolSd).toBe(0);
    expect(same.effectiveStudies).toBe(1000);
    expect(same.lower).toBeCloseTo(wilson.lower, 12);
    expect(same.upper).toBeCloseTo(wilson.upper, 12);
    // Replicates 0.1 apart at m = 1000 studies each: between-replicate variance 0.02/3 less the binomial noise Σp(1−p)/4/999.
    const spread = poolAwareInterval(300, 1000, [0.2, 0.3, 0.4, 0.3], 1000);
    const between = (0.01 + 0 + 0.01 + 0) / 3;
    const noise = (0.16 + 0.21 + 0.24 + 0.21) / 4 / 999;
    expect(spread.poolSd).toBeCloseTo(Math.sqrt(between - noise), 12);
    expect(spread.lower).toBeLessThan(wilson.lower - 0.05);
    expect(spread.upper).toBeGreaterThan(wilson.upper + 0.05);
  });
});

describe('design choice', () => {
  it('a worked grid: frontier, cheapest with costs, nothing reached', () => {
    const cells = [cell(10, 100, 0.5), cell(10, 200, 0.85), cell(12, 100, 0.9), cell(12, 200, 0.99), cell(40, 100, 0.95), cell(40, 200, 1)];
    const c = chooseDesign(cells, 0.8, { participant: 100, trial: 1 });
    expect(c.frontier.map((x) => [x.participants, x.trials])).toEqual([
      [10, 200],
      [12, 100],
    ]);
    // 10·(100 + 200) = 3000 against 12·(100 + 100) = 2400.
    expect(c.cheapest?.cell).toMatchObject({ participants: 12, trials: 100 });
    expect(c.cheapest?.cost).toBe(2400);
    // Expensive recruitment: 10·(1000 + 200) = 12000 against 12·(1000 + 100) = 13200.
    expect(chooseDesign(cells, 0.8, { participant: 1000, trial: 1 }).cheapest?.cell).toMatchObject({ participants: 10, trials: 200 });
    // A tie in cost (2400 each) goes to fewer participants.
    const tie = [cell(10, 240, 0.9), cell(20, 120, 0.9)];
    expect(chooseDesign(tie, 0.8, { participant: 0, trial: 1 }).cheapest?.cell).toMatchObject({ participants: 10, trials: 240 });
    const strict = chooseDesign(cells, 0.999);
    expect(strict.frontier.map((x) => [x.participants, x.trials])).toEqual([[40, 200]]);
    expect(chooseDesign(cells.slice(0, 3), 0.95).reached).toBe(false);
    expect(chooseDesign(cells.slice(0, 3), 0.95).best).toMatchObject({ participants: 12, trials: 100 });
  });

  it('property: the frontier is exactly the non-dominated reaching cells; the cheapest costs no more than any reaching cell', () => {
    const grid = fc.record({
      probs: fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 12, maxLength: 12 }),
      target: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
      participant: fc.double({ min: 0, max: 100, noNaN: true }),
      trial: fc.double({ min: 0, max: 5, noNaN: true }),
    });
    fc.assert(
      fc.property(grid, ({ probs, target, participant, trial }) => {
        const ns = [5, 10, 20, 40];
        const ts = [50, 100, 200];
        const cells = ns.flatMap((n, i) => ts.map((t, j) => cell(n, t, probs[i * 3 + j])));
        const costs = { participant, trial };
        const c = chooseDesign(cells, target, costs);
        const reaching = cells.filter((x) => x.correct.estimate >= target);
        expect(c.reached).toBe(reaching.length > 0);
        for (const r of reaching) {
          // Every reaching cell is matched or beaten on both counts by a frontier cell.
          expect(c.frontier.some((f) => f.participants <= r.participants && f.trials <= r.trials)).toBe(true);
          expect(studyCost(c.cheapest!.cell, costs)).toBeLessThanOrEqual(studyCost(r, costs));
        }
        for (const f of c.frontier) {
          expect(f.correct.estimate).toBeGreaterThanOrEqual(target);
          expect(reaching.some((r) => r !== f && r.participants <= f.participants && r.trials <= f.trials)).toBe(false);
        }
      }),
      FC,
    );
  });
});

describe('target contour', () => {
  it('follows the cell edges between reaching and non-reaching cells', () => {
    // rows = participants (bottom up), columns = trials: only the top-right cell reaches.
    const segs = targetContour([
      [false, false],
      [false, true],
    ]);
    expect(segs).toEqual(
      expect.arrayContaining([
        { x: 0.5, y: 0.5, x2: 0.5, y2: 1.5 },
        { x: 0.5, y: 0.5, x2: 1.5, y2: 0.5 },
      ]),
    );
    expect(segs).toHaveLength(2);
    expect(targetContour([[true, true]])).toEqual([]);
  });
});

describe('plan notes', () => {
  const plan: PlanSpec = { participants: [10, 20], population: { a: 0.7, b: 0.3 }, pool: 40, analysis: { method: 'random-effects', evidence: 'bic', rule: 'protected-exceedance', threshold: 0.95 }, target: 0.8, resamples: 1000, poolReplicates: 0 };
  const pool = tracingPool({ a: 40, b: 40 });
  const notesFor = (cells: GridCell[]) => planNotes({ name: 'n', seed: 1, scenarioHash: 'h', toolVersion: 't', plan, majority: 'a', pool, poolSize: 40, cells, choice: chooseDesign(cells, plan.target), ties: [], poolUse: poolUse(pool, plan.population, plan.participants) }).join('\n');

  it('say when studies conclude for the wrong model, and when a reaching design is borderline', () => {
    const misled = { ...cell(20, 100, 0.5), wrong: 400, none: 100 };
    expect(notesFor([cell(10, 100, 0.3), misled])).toMatch(/No \(N, T\) in the grid reaches the target 80%; the best is 50% .* 40% of studies there name another model/);
    const edge = { ...cell(20, 100, 0.81), correct: { ...proportion(810, 1000), lower: 0.78 } };
    expect(notesFor([cell(10, 100, 0.3), edge])).toMatch(/Borderline: N = 20, T = 100/);
    // A pool of 40 per model is far from 20 × 0.7 draws: no pool warning, and the caution about shared participants is always there.
    expect(notesFor([cell(10, 100, 0.9)])).not.toMatch(/Warning/);
    expect(notesFor([cell(10, 100, 0.9)])).toMatch(/Studies share participants/);
    expect(notesFor([cell(10, 100, 0.9)])).toMatch(/pool's own sampling error is not counted/);
  });

  it('show a P(correct) within a point of the target with one decimal', () => {
    expect(percentNear(0.795, 0.8)).toBe('79.5%');
    expect(percentNear(0.8, 0.8)).toBe('80%');
    expect(percentNear(0.5, 0.8)).toBe('50%');
  });
});
