/**
 * Reading participants' data and the pure parts of `fit`: bad input reported
 * per problem with line numbers; the Kolmogorov–Smirnov distance and
 * quantiles of the predictive check against hand computations and R's
 * default quantile (Hyndman & Fan 1996, type 7); the group summary's winner
 * counts, evidence source and same-fit warning; the recovery lookup's nearest
 * trial count.
 */
import { describe, it, expect, afterAll } from 'vitest';
import fc from 'fast-check';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { readParticipantData, DEFAULT_COLUMNS, type DataRules } from '../src/data/participantData.js';
import { readDrawFile } from '../src/scenario/drawFile.js';
import { ksDistance, predictiveCheck, quantileSorted } from '../src/analysis/predictiveCheck.js';
import { groupSummary, participantSummary } from '../src/analysis/groupFit.js';
import { winnerAgainstRecovery, type RecoveryStudy } from '../src/analysis/recoveryLookup.js';
import type { ParticipantLine } from '../src/analysis/participantTypes.js';
import type { FitLine } from '../src/analysis/types.js';
import { UserError } from '../src/cli/userError.js';

const dir = mkdtempSync(join(tmpdir(), 'lp-fitdata-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let n = 0;
function file(text: string): string {
  const p = join(dir, `f${n++}.csv`);
  writeFileSync(p, text);
  return p;
}
const RULES: DataRules = { columns: DEFAULT_COLUMNS, conditions: ['near', 'far'], lower: 0, upper: 100, minTrials: 2 };

function errorOf(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(UserError);
    return (e as Error).message;
  }
  throw new Error('expected a UserError');
}

describe('reading participants\' data', () => {
  it('reads tidy rows in file order, ignores extra columns, maps conditions to scenario order', () => {
    const p = file('participant,stimulus,condition,response,rt\nA,10,far,12.5,0.3\nB,20,near,19,0.4\nA,30,near,31,0.2\nB,40,far,38.25,0.5\n');
    const data = readParticipantData(p, RULES);
    expect(data.map((d) => d.participant)).toEqual(['A', 'B']);
    expect(Array.from(data[0].data.stimulus)).toEqual([10, 30]);
    expect(Array.from(data[0].data.condition)).toEqual([1, 0]);
    expect(Array.from(data[1].data.response)).toEqual([19, 38.25]);
  });

  it('reads numbers exactly (shortest round-trip text gives the same double)', () => {
    const x = 0.1 + 0.2;
    const p = file(`participant,condition,stimulus,response\nA,near,${x},${1 / 3}\nA,near,${Math.PI},${Math.E}\n`);
    const d = readParticipantData(p, RULES)[0].data;
    expect(d.stimulus[0]).toBe(x);
    expect(d.response[0]).toBe(1 / 3);
    expect(d.stimulus[1]).toBe(Math.PI);
  });

  it('takes configurable column names, and no condition column when the design has one condition', () => {
    const p = file('subj,x,r\nA,1,2\nA,3,4\n');
    const d = readParticipantData(p, { ...RULES, conditions: ['only'], columns: { participant: 'subj', condition: 'cond', stimulus: 'x', response: 'r' } });
    expect(Array.from(d[0].data.condition)).toEqual([0, 0]);
  });

  it('names missing columns', () => {
    const msg = errorOf(() => readParticipantData(file('participant,stimulus\nA,1\n'), RULES));
    expect(msg).toMatch(/lacks the columns 'response' \(response\), 'condition' \(condition\)/);
  });

  it('reports every bad row with its line number, in one message', () => {
    const text = [
      'participant,condition,stimulus,response',
      'A,near,1,2', // line 2 fine
      'A,near,abc,2', // 3: stimulus not a number
      'A,near,1,', // 4: response missing
      'A,near,1,120', // 5: response out of range
      'A,middle,1,2', // 6: unknown condition
      ',near,1,2', // 7: empty participant
      '',
      'A,near,0x10,2', // 9 (after a blank line): hex is not a decimal number
      'B,far,1,2', // B has one trial: too few
    ].join('\n');
    const msg = errorOf(() => readParticipantData(file(text), RULES));
    // A keeps only line 2 (every other row of A is bad), so A is short of trials too.
    expect(msg).toMatch(/has 8 problems/);
    expect(msg).toMatch(/participant 'A' \(first seen on line 2\) has 1 valid trial/);
    expect(msg).toMatch(/line 3: stimulus 'abc' is not a number/);
    expect(msg).toMatch(/line 4: response '' is not a number/);
    expect(msg).toMatch(/line 5: response 120 lies outside the response range \[0, 100\]/);
    expect(msg).toMatch(/line 6: unknown condition 'middle' \(the scenario has: near, far\)/);
    expect(msg).toMatch(/line 7: participant is empty/);
    expect(msg).toMatch(/line 9: stimulus '0x10' is not a number/);
    expect(msg).toMatch(/participant 'B' \(first seen on line 10\) has 1 valid trial; at least 2/);
  });

  it('rejects a missing file and a header without rows', () => {
    expect(errorOf(() => readParticipantData(join(dir, 'nope.csv'), RULES))).toMatch(/cannot read the data file/);
    expect(errorOf(() => readParticipantData(file('participant,condition,stimulus,response\n'), RULES))).toMatch(/no trials/);
  });

  it('reads a parameter-draw file, empty cells meaning "not this model\'s parameter"', () => {
    const d = readDrawFile(file('participant,model,loss.exponent,motorSd\np1,power,1.5,2\np1,squared,,2.5\n'));
    expect(d.model).toEqual(['power', 'squared']);
    expect(d.values).toEqual([{ 'loss.exponent': 1.5, motorSd: 2 }, { motorSd: 2.5 }]);
    expect(errorOf(() => readDrawFile(file('participant,model,motorSd\np1,power,x\n')))).toMatch(/line 2: motorSd 'x' is not a number/);
  });
});

describe('predictive check', () => {
  it('two-sample KS distance: hand-computed cases', () => {
    // {1,2,3} vs {4,5,6}: disjoint, D = 1. {1,2,3,4} vs {3,4,5,6}: after 2, F = 0.5 vs 0 → D = 0.5.
    expect(ksDistance([1, 2, 3], [4, 5, 6])).toBe(1);
    expect(ksDistance([1, 2, 3, 4], [3, 4, 5, 6])).toBe(0.5);
    // Identical samples (with ties): D = 0.
    expect(ksDistance([2, 1, 2, 3], [3, 2, 1, 2])).toBe(0);
    // {1,2} vs {1,1,2,2,3,3}: at 1, 0.5 vs 1/3; at 2, 1 vs 2/3 → D = 1/3.
    expect(ksDistance([1, 2], [1, 1, 2, 2, 3, 3])).toBeCloseTo(1 / 3, 15);
  });

  it('quantiles match R quantile(1:10, type = 7) (from memory: 1.9, 3.25, 5.5, 7.75, 9.1)', () => {
    const x = Float64Array.from({ length: 10 }, (_, i) => i + 1);
    expect([0.1, 0.25, 0.5, 0.75, 0.9].map((p) => quantileSorted(x, p))).toEqual([1.9, 3.25, 5.5, 7.75, 9.1].map((v, i) => expect.closeTo(v, 12) as unknown as number));
  });

  it('property: KS distance lies in [0, 1], is symmetric, and is unchanged by a strictly increasing transform', () => {
    // Whole numbers: many ties, and exp keeps them strictly ordered in floating point.
    const sample = fc.array(fc.integer({ min: -20, max: 20 }), { minLength: 1, maxLength: 30 });
    fc.assert(
      fc.property(sample, sample, (a, b) => {
        const d = ksDistance(a, b);
        expect(d).toBeGreaterThanOrEqual(0);
        expect(d).toBeLessThanOrEqual(1);
        expect(ksDistance(b, a)).toBe(d);
        // The statistic depends only on ranks (Smirnov 1939): exp is strictly increasing.
        expect(ksDistance(a.map(Math.exp), b.map(Math.exp))).toBeCloseTo(d, 12);
      }),
      { seed: 20261202, numRuns: 200 },
    );
  });

  it('critical value 1.358·√((n+m)/(nm)) (Massey 1951, from memory)', () => {
    const c = predictiveCheck('m', [0, 1, 2, 3], [0, 1, 2, 3, 4, 5, 6, 7], 2);
    expect(c.ksCritical5Percent).toBeCloseTo(1.358 * Math.sqrt(12 / 32), 12);
    expect(c.ksDistance).toBe(0.5);
  });
});

function fit(model: string, ll: number, k = 2, n = 100): FitLine {
  const bic = -2 * ll + k * Math.log(n);
  return { model, status: 'ok', reason: 'converged', logLikelihood: ll, k, aic: -2 * ll + 2 * k, aicc: null, bic, cvLogLikelihood: ll - 3, parameters: [{ name: 'motorSd', value: 2, se: 0.1, lower95: 1.8, upper95: 2.2, free: 0, freeSe: 0.1, atBound: false }], flatDirection: false, evaluations: 10 };
}
function line(id: string, lls: Record<string, number>, winner: string | null): ParticipantLine {
  const fits = Object.entries(lls).map(([m, ll]) => fit(m, ll));
  const best = Math.min(...fits.map((f) => f.bic!));
  const delta = Object.fromEntries(fits.map((f) => [f.model, f.bic! - best]));
  return {
    key: `participant=${id}`,
    participant: id,
    trials: 100,
    status: 'ok',
    fits,
    comparison: { criterion: 'bic', status: winner ? 'won' : 'undecided', winner, contenders: winner ? [winner] : ['a', 'b'], delta, weight: {} },
    predictive: [],
  };
}

describe('group summary', () => {
  const lines = [line('p2', { a: -100, b: -110, c: -100.0001 }, 'a'), line('p1', { a: -120, b: -105, c: -120.0002 }, 'b'), line('p3', { a: -90, b: -90.5, c: -90 }, null)];

  it('counts winners, feeds −BIC/2 to random-effects selection, and warns about models with the same likelihood', () => {
    const g = groupSummary(lines, 'bic', { candidates: ['a', 'b', 'c'], evidence: 'bic', nested: [] });
    expect(g.winnerCounts).toEqual([
      { model: 'a', participants: 1 },
      { model: 'b', participants: 1 },
      { model: 'c', participants: 0 },
    ]);
    expect(g.undecided).toBe(1);
    expect(g.randomEffects!.logEvidence).toBe('bic');
    expect(g.randomEffects!.participantsUsed).toBe(3);
    expect(g.warnings.some((w) => /'a' and 'c' reach the same likelihood .* for 3 of 3 participants/.test(w))).toBe(true);
    expect(g.warnings.some((w) => /'a' and 'b'/.test(w))).toBe(false);
  });

  it('cross-validated evidence differs from −BIC/2 and is used when asked', () => {
    const bic = groupSummary(lines, 'bic', { candidates: ['a', 'b', 'c'], evidence: 'bic', nested: [] }).randomEffects!;
    const cv = groupSummary(lines, 'bic', { candidates: ['a', 'b', 'c'], evidence: 'cv', nested: [] }).randomEffects!;
    expect(cv.logEvidence).toBe('cv');
    expect(cv.logEvidenceDescription).toMatch(/cross-validated/);
    // Every model's evidence moves by the same 3 nats here, so the selection cannot change.
    cv.expectedFrequency.forEach((f, i) => expect(f).toBeCloseTo(bic.expectedFrequency[i], 9));
  });

  it('participant summary: decision, best and runner-up by criterion difference', () => {
    const s = participantSummary(lines[1]);
    expect(s.decision).toBe('b');
    expect(s.best).toBe('b');
    expect(s.runnerUp).toBe('a');
    expect(participantSummary(lines[2]).decision).toBe('undecided');
  });
});

describe('recovery lookup', () => {
  const summaryAt = (right: number) =>
    ({
      trials: [60],
      inversion: { rows: ['a', 'b'], columns: ['a', 'b'], rate: [[right, 0.3], [1 - right, 0.7]], chosen: [10, 10] },
      recovery: [{ generating: 'a', jobs: 10, fitted: 10, fitFailed: 0, flatDirection: 0, parameters: [{ name: 'motorSd', n: 10, pearson: 0.9, spearman: 0.9, bias: 0.1, rmse: 0.2, coverage: { estimate: 0.95 }, intervalMissing: 0, atBound: 0, missing: 0, bins: null }] }],
    }) as unknown as RecoveryStudy['overall'];
  const study: RecoveryStudy = { name: 's', models: ['a', 'b'], overall: summaryAt(0.5), byTrials: { '60': summaryAt(0.6), '240': summaryAt(0.9) } };

  it('reads the nearest trial count (ties to the smaller) and says which', () => {
    const r = winnerAgainstRecovery(study, 'p1', 'a', 200, [{ name: 'motorSd', estimate: 2 }])!;
    expect(r.recoveryTrials).toBe(240);
    expect(r.choiceRightInSimulation).toBe(0.9);
    expect(r.trialNote).toMatch(/nearest trial count in the study: 240 \(participant has 200\)/);
    expect(winnerAgainstRecovery(study, 'p1', 'a', 150, [])!.recoveryTrials).toBe(60);
    expect(r.parameters[0].recoveredWell).toBe(true);
    expect(r.parameters[0].inStudiedRange).toBeNull();
  });
});

describe('a participant job with cross-validated evidence', () => {
  it('adds the cross-validated log-likelihood to every fit, and group selection uses it', async () => {
    const { loadStudy } = await import('../src/engine/resolve.js');
    const { syntheticDataset, prefix } = await import('../src/engine/syntheticObserver.js');
    const { fitParticipant, toArrays, participantKey } = await import('../src/engine/fitParticipant.js');
    const study = loadStudy(join(process.cwd(), 'test', 'fixtures', 'tiny-study.yaml'));
    const data = prefix(syntheticDataset(study, 'asymmetric', 0).full, 60);
    const l = fitParticipant(study, { kind: 'participant', scenario: study.scenario, hash: study.hash, key: participantKey('p/1'), participant: 'p/1', trials: toArrays(data), crossValidate: true });
    expect(l.key).toBe('participant=p%2F1');
    for (const f of l.fits) {
      expect(f.cvLogLikelihood).toBeLessThan(f.logLikelihood!); // held-out fit is worse than in-sample
      expect(f.cvLogLikelihood).toBeGreaterThan(f.logLikelihood! - 60); // but not absurdly so on 60 trials
    }
    const g = groupSummary([l], 'bic', { candidates: ['squared', 'absolute', 'asymmetric'], evidence: 'cv', nested: [] });
    expect(g.randomEffects!.participantsUsed).toBe(1);
    expect(l.predictive).toHaveLength(3);
  }, 120_000);
});

describe('predictive checks per condition', () => {
  it('a design with two conditions gets one check over all trials and one per condition, per model', async () => {
    const { readFileSync } = await import('node:fs');
    const { parse } = await import('yaml');
    const { scenarioSchema } = await import('../src/scenario/schema.js');
    const { resolveStudy } = await import('../src/engine/resolve.js');
    const { syntheticDataset, prefix } = await import('../src/engine/syntheticObserver.js');
    const { fitParticipant, toArrays } = await import('../src/engine/fitParticipant.js');
    const doc = parse(readFileSync(join(process.cwd(), 'test', 'fixtures', 'tiny-study.yaml'), 'utf8'));
    doc.conditions.push({ name: 'dim', noise: { family: 'constant', sd: 14 } });
    const study = resolveStudy(scenarioSchema.parse(doc), 'two-condition test');
    const data = prefix(syntheticDataset(study, 'squared', 0).full, 40);
    const l = fitParticipant(study, { kind: 'participant', scenario: study.scenario, hash: study.hash, key: 'participant=x', participant: 'x', trials: toArrays(data), crossValidate: false });
    expect(l.predictive.map((c) => `${c.model}/${c.condition ?? 'all'}`)).toEqual(
      ['squared', 'absolute', 'asymmetric'].flatMap((m) => [`${m}/all`, `${m}/flash`, `${m}/dim`]),
    );
    const s = participantSummary(l);
    expect(s.models[0].predictiveCheck!.condition).toBeNull();
    expect(s.models[0].predictiveByCondition.map((c) => c.condition)).toEqual(['flash', 'dim']);
    // 20 trials per condition: the critical value is 1.358·√((20 + 400)/(20·400)).
    expect(s.models[0].predictiveByCondition[0].ksCritical5Percent).toBeCloseTo(1.358 * Math.sqrt(420 / 8000), 12);
  }, 120_000);
});
