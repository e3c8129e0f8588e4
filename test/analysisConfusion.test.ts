/**
 * Checks of model-recovery analysis: confusion matrix, inversion matrix
 * (Wilson & Collins 2019, eLife 8:e49547, Box 2), accuracies with Wilson
 * (1927) and MOVER (Zou & Donner 2008) intervals, ties, failures, verdicts,
 * job-key order and order-independence of the whole summary. Expected values
 * are worked by hand in the comments beside them.
 */
import { describe, it, expect } from 'vitest';
import type { ComparisonLine, FitLine, JobLine } from '../src/analysis/types.js';
import { confusionMatrix, overallAccuracy, balancedAccuracy, chanceLevel } from '../src/analysis/confusion.js';
import { inversionMatrix, invertRates } from '../src/analysis/inversion.js';
import { jobOutcome } from '../src/analysis/outcome.js';
import { verdicts, percent } from '../src/analysis/verdict.js';
import { summarize, summarizeByTrials, compareJobKeys, sortJobLines } from '../src/analysis/summarize.js';
import { jsonSafe } from '../src/analysis/jsonSafe.js';
import { wilsonInterval, Z95 } from '../src/analysis/wilson.js';

type Result =
  | { won: string }
  | { tied: string[] }
  | { undecided: string[] }
  | { comparisonFailed: true }
  | { jobFailed: true };

function fit(model: string, scores: { aic?: number; bic?: number } = {}, status: 'ok' | 'failed' = 'ok'): FitLine {
  return {
    model,
    status,
    reason: status === 'ok' ? '' : 'optimiser diverged',
    logLikelihood: status === 'ok' ? -100 : null,
    k: 2,
    aic: status === 'ok' ? (scores.aic ?? 204) : null,
    aicc: status === 'ok' ? 204.1 : null,
    bic: status === 'ok' ? (scores.bic ?? 210) : null,
    parameters: [],
    flatDirection: false,
    evaluations: 100,
  };
}

function key(gen: string, obs: number, trials: number): string {
  return `gen=${gen}/obs=${String(obs).padStart(4, '0')}/trials=${trials}`;
}

function line(gen: string, obs: number, r: Result, opts: { trials?: number; models?: string[]; fits?: FitLine[]; criterion?: ComparisonLine['criterion'] } = {}): JobLine {
  const trials = opts.trials ?? 100;
  const models = opts.models ?? ['A', 'B', 'C'];
  const base = { key: key(gen, obs, trials), generating: gen, observer: obs, trials, truth: {}, truthFree: {}, attempts: 1 };
  if ('jobFailed' in r) return { ...base, status: 'failed', error: 'worker exited', fits: [], comparison: null };
  const comparison = (status: ComparisonLine['status'], winner: string | null, contenders: string[]): ComparisonLine => ({
    criterion: opts.criterion ?? 'aic',
    status,
    winner,
    contenders,
    delta: {},
    weight: {},
  });
  const fits = opts.fits ?? models.map((m) => fit(m));
  let c: ComparisonLine;
  if ('won' in r) c = comparison('won', r.won, [r.won]);
  else if ('tied' in r) c = comparison('tied', null, r.tied);
  else if ('undecided' in r) c = comparison('undecided', null, r.undecided);
  else c = comparison('failed', null, []);
  return { ...base, status: 'ok', fits, comparison: c };
}

/** Repeat a result `times` times for consecutive observers starting at `from`. */
function many(gen: string, from: number, times: number, r: Result): JobLine[] {
  return Array.from({ length: times }, (_, k) => line(gen, from + k, r));
}

/*
 * The hand-worked study. Candidates A, B, C; generating A, B, C and D (D is
 * not a candidate).
 *   A (10 jobs): 7 won by A, 2 by B, 1 tied {B, A} (listed out of order)
 *   B (10 jobs): 1 won by A, 6 by B, 1 tied {A, B}, 1 undecided {A, B}, 1 job failed
 *   C  (5 jobs): 4 won by C, 1 comparison failed
 *   D  (4 jobs): 2 won by A, 1 by C, 1 undecided {C, B}
 */
const CANDIDATES = ['A', 'B', 'C'];
const GENERATING = ['A', 'B', 'C', 'D'];
const study: JobLine[] = [
  ...many('A', 0, 7, { won: 'A' }),
  ...many('A', 7, 2, { won: 'B' }),
  line('A', 9, { tied: ['B', 'A'] }),
  line('B', 0, { won: 'A' }),
  ...many('B', 1, 6, { won: 'B' }),
  line('B', 7, { tied: ['A', 'B'] }),
  line('B', 8, { undecided: ['A', 'B'] }),
  line('B', 9, { jobFailed: true }),
  ...many('C', 0, 4, { won: 'C' }),
  line('C', 4, { comparisonFailed: true }),
  ...many('D', 0, 2, { won: 'A' }),
  line('D', 2, { won: 'C' }),
  line('D', 3, { undecided: ['C', 'B'] }),
];

/** Deterministic shuffle (Park–Miller minimal standard generator, Park & Miller 1988, CACM). */
function shuffled<T>(xs: readonly T[], seed: number): T[] {
  const out = [...xs];
  let s = seed;
  for (let i = out.length - 1; i > 0; i--) {
    s = (s * 16807) % 2147483647;
    const j = s % (i + 1);
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

describe('confusion matrix (hand-worked study)', () => {
  const c = confusionMatrix(study, CANDIDATES, GENERATING);

  it('counts wins per row and column, with ties, undecided and failures kept out of the cells', () => {
    expect(c.rows).toEqual(GENERATING);
    expect(c.columns).toEqual(CANDIDATES);
    expect(c.n).toEqual([10, 10, 5, 4]);
    expect(c.counts).toEqual([
      [7, 2, 0],
      [1, 6, 0],
      [0, 0, 4],
      [2, 0, 1],
    ]);
    // Tied + undecided per row: A 1; B 1 + 1 = 2; C 0; D 1.
    expect(c.undecided).toEqual([1, 2, 0, 1]);
    // Failed: B's failed job; C's failed comparison.
    expect(c.failed).toEqual([0, 1, 1, 0]);
    // Every job lands in exactly one place.
    c.n.forEach((n, i) => expect(c.counts[i].reduce((a, b) => a + b, 0) + c.undecided[i] + c.failed[i]).toBe(n));
  });

  it('normalises rates by all jobs of the row, undecided and failed included', () => {
    // A: 7/10, 2/10, 0; B: 1/10, 6/10, 0; C: 0, 0, 4/5; D: 2/4, 0, 1/4.
    const expected = [
      [0.7, 0.2, 0],
      [0.1, 0.6, 0],
      [0, 0, 0.8],
      [0.5, 0, 0.25],
    ];
    c.rate.forEach((row, i) => row.forEach((r, j) => expect(r).toBeCloseTo(expected[i][j], 15)));
    expect(c.undecidedRate).toEqual([0.1, 0.2, 0, 0.25]);
    expect(c.failedRate).toEqual([0, 0.1, 0.2, 0]);
  });

  it('gives each cell its Wilson interval', () => {
    const w = wilsonInterval(2, 4);
    expect(c.lower[3][0]).toBe(w.lower);
    expect(c.upper[3][0]).toBe(w.upper);
    // 0 of 10: lower exactly 0, upper z²/(n + z²) = 3.8415/13.8415 (solve the Wilson quadratic at p̂ = 0).
    expect(c.lower[0][2]).toBe(0);
    expect(c.upper[0][2]).toBeCloseTo((Z95 * Z95) / (10 + Z95 * Z95), 12);
  });

  it('has a diagonal only where the generating model is a candidate', () => {
    expect(c.diagonal).toEqual([0, 1, 2, null]);
    expect(c.recovered[3]).toBeNull();
    expect(c.recovered[1]).toMatchObject({ successes: 6, n: 10, estimate: 0.6 });
  });

  it('records which contender sets were tied, in candidate order', () => {
    // A's tie was listed {B, A}; it is the set {A, B}.
    expect(c.ties[0]).toEqual([{ contenders: ['A', 'B'], count: 1, tied: 1, undecided: 0, rate: 0.1, includesGenerating: true }]);
    // B: one tied and one undecided, both {A, B}: one group of 2 (2/10).
    expect(c.ties[1]).toEqual([{ contenders: ['A', 'B'], count: 2, tied: 1, undecided: 1, rate: 0.2, includesGenerating: true }]);
    expect(c.ties[2]).toEqual([]);
    // D is not a contender in its own row's set {B, C}.
    expect(c.ties[3]).toEqual([{ contenders: ['B', 'C'], count: 1, tied: 0, undecided: 1, rate: 0.25, includesGenerating: false }]);
  });

  it('computes accuracy over candidate rows, undecided and failed counting as not recovered', () => {
    // (7 + 6 + 4) / (10 + 10 + 5) = 17/25 = 0.68; row D cannot be recovered and is left out.
    const a = overallAccuracy(c);
    expect(a.successes).toBe(17);
    expect(a.n).toBe(25);
    expect(a.estimate).toBeCloseTo(0.68, 15);
    expect([a.lower, a.upper]).toEqual([wilsonInterval(17, 25).lower, wilsonInterval(17, 25).upper]);
  });

  it('computes balanced accuracy as the mean diagonal rate with a MOVER interval', () => {
    // (0.7 + 0.6 + 0.8) / 3 = 0.7.
    const b = balancedAccuracy(c);
    expect(b.rows).toBe(3);
    expect(b.estimate).toBeCloseTo(0.7, 15);
    // MOVER (Zou & Donner 2008): L = 0.7 − √Σ (1/3)²(pᵢ − ℓᵢ)², U = 0.7 + √Σ (1/3)²(uᵢ − pᵢ)².
    const w = [wilsonInterval(7, 10), wilsonInterval(6, 10), wilsonInterval(4, 5)];
    const down = Math.sqrt(w.reduce((s, x) => s + ((x.estimate - x.lower) / 3) ** 2, 0));
    const up = Math.sqrt(w.reduce((s, x) => s + ((x.upper - x.estimate) / 3) ** 2, 0));
    expect(b.lower).toBeCloseTo(0.7 - down, 14);
    expect(b.upper).toBeCloseTo(0.7 + up, 14);
    // The mean's interval is narrower than any single row's.
    w.forEach((x) => expect(b.upper - b.lower).toBeLessThan(x.upper - x.lower));
  });

  it('states chance as one over the number of candidates', () => {
    expect(chanceLevel(CANDIDATES)).toBeCloseTo(1 / 3, 15);
  });
});

describe('inversion matrix', () => {
  it('column-normalises the rates (uniform prior over generating models)', () => {
    const inv = inversionMatrix(confusionMatrix(study, CANDIDATES, GENERATING));
    // Column A: rates 0.7, 0.1, 0, 0.5, sum 1.3 → 7/13, 1/13, 0, 5/13.
    // Column B: 0.2, 0.6, 0, 0, sum 0.8 → 1/4, 3/4, 0, 0.
    // Column C: 0, 0, 0.8, 0.25, sum 1.05 → 0, 0, 16/21, 5/21.
    const expected = [
      [7 / 13, 1 / 4, 0],
      [1 / 13, 3 / 4, 0],
      [0, 0, 16 / 21],
      [5 / 13, 0, 5 / 21],
    ];
    inv.rate.forEach((row, i) => row.forEach((r, j) => expect(r).toBeCloseTo(expected[i][j], 14)));
    // Jobs choosing each column: A 7 + 1 + 2 = 10, B 2 + 6 = 8, C 4 + 1 = 5.
    expect(inv.chosen).toEqual([10, 8, 5]);
  });

  it('uses rates, not counts, so unequal row sizes do not act as a prior', () => {
    // Row 1 has 100 jobs, row 2 has 10, both choose column 0 half the time:
    // rates 0.5 and 0.5 → P(row | column 0) = 1/2 each, not 100/110.
    expect(invertRates([
      [0.5, 0.5],
      [0.5, 0.5],
    ])).toEqual([
      [0.5, 0.5],
      [0.5, 0.5],
    ]);
  });

  it('gives NaN for a column never chosen and for rows without jobs', () => {
    const inv = invertRates([
      [1, 0],
      [NaN, NaN],
      [0.5, 0],
    ]);
    // Column 0: 1 and 0.5 → 2/3, 1/3; the empty row takes no part.
    expect(inv[0][0]).toBeCloseTo(2 / 3, 15);
    expect(inv[2][0]).toBeCloseTo(1 / 3, 15);
    expect(inv[1][0]).toBeNaN();
    expect(inv.map((r) => r[1]).every(Number.isNaN)).toBe(true);
    expect(jsonSafe(inv)).toEqual([
      [1 / (1 + 0.5), null],
      [null, null],
      [0.5 / 1.5, null],
    ]);
  });
});

describe('ties, undecided and failures are never credited to a model', () => {
  it('a row of only ties has no wins and zero recovery', () => {
    const lines = [...many('A', 0, 5, { tied: ['A', 'B'] }), ...many('A', 5, 5, { undecided: ['A', 'C'] })];
    const c = confusionMatrix(lines, CANDIDATES, ['A']);
    expect(c.counts).toEqual([[0, 0, 0]]);
    expect(c.undecided).toEqual([10]);
    expect(overallAccuracy(c)).toMatchObject({ successes: 0, n: 10, estimate: 0 });
    // Inversion: nothing was chosen, so every column is undefined.
    expect(inversionMatrix(c).rate[0].every(Number.isNaN)).toBe(true);
  });

  it('counts failed jobs, failed comparisons and failed fits as failed', () => {
    const lines = [
      line('A', 0, { jobFailed: true }),
      line('A', 1, { comparisonFailed: true }),
      // No stored comparison, so judged afresh by AIC: B's fit failed, so nobody wins.
      { ...line('A', 2, { won: 'A' }, { fits: [fit('A'), fit('B', {}, 'failed'), fit('C')] }), comparison: null },
      line('A', 3, { won: 'A' }),
    ];
    const c = confusionMatrix(lines, CANDIDATES, ['A'], { criterion: 'aic' });
    expect(c.failed).toEqual([3]);
    expect(c.counts).toEqual([[1, 0, 0]]);
    const s = summarize(lines, { candidates: CANDIDATES, generating: ['A'], criterion: 'aic' });
    expect(s.failed).toEqual([3]);
    expect(s.undecided).toEqual([0]);
    expect(s.accuracy).toMatchObject({ successes: 1, n: 4 });
  });
});

describe('job outcomes', () => {
  it('uses the stored comparison when criterion and candidates match', () => {
    const l = line('A', 0, { won: 'B' }, { fits: [fit('A', { aic: 100 }), fit('B', { aic: 200 }), fit('C', { aic: 300 })] });
    // The stored comparison is the source of truth even where the fits would say otherwise.
    expect(jobOutcome(l, CANDIDATES)).toEqual({ kind: 'won', winner: 'B', redecided: false });
    expect(jobOutcome(l, CANDIDATES, { criterion: 'aic' })).toEqual({ kind: 'won', winner: 'B', redecided: false });
  });

  it('decides afresh for another criterion, with the fit stage tie rule', () => {
    const fits = [fit('A', { aic: 200, bic: 212 }), fit('B', { aic: 201, bic: 210 }), fit('C', { aic: 205, bic: 210.001 })];
    const l = line('A', 0, { won: 'A' }, { fits });
    // BIC: B 210, C 210.001 (Δ = 0.001 < 2e-3 → tied), A 212.
    expect(jobOutcome(l, CANDIDATES, { criterion: 'bic' })).toEqual({ kind: 'tied', contenders: ['B', 'C'], redecided: true });
    // With a looser C (Δ = 0.5) B wins; a margin of 1 makes it undecided between B and C.
    const l2 = line('A', 1, { won: 'A' }, { fits: [fits[0], fits[1], fit('C', { aic: 205, bic: 210.5 })] });
    expect(jobOutcome(l2, CANDIDATES, { criterion: 'bic' })).toEqual({ kind: 'won', winner: 'B', redecided: true });
    expect(jobOutcome(l2, CANDIDATES, { criterion: 'bic', margin: 1 })).toEqual({ kind: 'undecided', contenders: ['B', 'C'], redecided: true });
  });

  it('decides afresh among a subset of the fitted candidates', () => {
    const fits = [fit('A', { aic: 203 }), fit('B', { aic: 201 }), fit('C', { aic: 190 })];
    const l = line('A', 0, { won: 'C' }, { fits });
    // C won among three; among A and B, B (201 < 203) wins.
    expect(jobOutcome(l, ['A', 'B'])).toEqual({ kind: 'won', winner: 'B', redecided: true });
    const c = confusionMatrix([l], ['A', 'B'], ['A']);
    expect(c.counts).toEqual([[0, 1]]);
    expect(c.redecided).toBe(1);
  });

  it('rejects lines that contradict the candidate list', () => {
    const bad = line('A', 0, { won: 'Z' });
    expect(() => jobOutcome(bad, CANDIDATES)).toThrow(/winner 'Z'/);
    expect(() => confusionMatrix([line('E', 0, { won: 'A' })], CANDIDATES, GENERATING)).toThrow(/'E' is not in the list/);
    expect(() => confusionMatrix([], ['A', 'A'], GENERATING)).toThrow(/twice/);
  });
});

describe('verdicts', () => {
  it('states recovery, confusions, ties, failures and chance for the hand-worked study', () => {
    const c = confusionMatrix(study, CANDIDATES, GENERATING);
    // Wilson 7/10 = [0.397, 0.892], 6/10 = [0.313, 0.832], 4/5 = [0.376, 0.964]; chance 1/3.
    expect(verdicts(c, 1 / 3).map((v) => v.text)).toEqual([
      'A: recovered in 70% [40, 89] of 10 datasets; confused mostly with B (20%); 10% tied or undecided',
      'B: recovered in 60% [31, 83] of 10 datasets; confused mostly with A (10%); 20% tied or undecided; 10% failed; interval includes chance (33%)',
      'C: recovered in 80% [38, 96] of 5 datasets; 20% failed',
      'D (not a candidate): chosen as A in 50%, C in 25% of 4 datasets; 25% tied or undecided',
    ]);
    expect(verdicts(c, 1 / 3).map((v) => v.kind)).toEqual(['recovery', 'recovery', 'recovery', 'not-candidate']);
  });

  it('calls a mostly tied row not identifiable and names the models it is tied with', () => {
    const cands = ['squared', 'absolute', 'hit-or-miss'];
    const models = { models: cands };
    const lines = [
      ...Array.from({ length: 19 }, (_, k) => line('squared', k, { tied: ['hit-or-miss', 'squared', 'absolute'] }, models)),
      line('squared', 19, { won: 'squared' }, models),
    ];
    const [v] = verdicts(confusionMatrix(lines, cands, ['squared']), 1 / 3);
    // 19/20 = 95% tied; 1/20 = 5% won.
    expect(v).toEqual({
      generating: 'squared',
      kind: 'not-identifiable',
      text: 'squared: not identifiable under this design: 95% of 20 datasets tied with absolute and hit-or-miss; recovered in 5%',
    });
  });

  it('reports rows without data and rows where everything failed', () => {
    const c = confusionMatrix(many('B', 0, 3, { jobFailed: true }), CANDIDATES, ['A', 'B']);
    expect(verdicts(c, 1 / 3).map((v) => v.text)).toEqual(['A: no datasets', 'B: all 3 datasets failed to fit']);
  });

  it('never rounds a near-perfect or near-zero share to 100% or 0%', () => {
    expect(percent(299 / 300)).toBe('>99');
    expect(percent(1 / 300)).toBe('<1');
    expect(percent(1)).toBe('100');
    expect(percent(0)).toBe('0');
    expect(percent(0.925)).toBe('93');
  });
});

describe('job-key order', () => {
  it('compares fields as numbers where both are numbers', () => {
    expect(compareJobKeys('gen=a/obs=0001/trials=240', 'gen=a/obs=0001/trials=1000')).toBeLessThan(0);
    expect(compareJobKeys('gen=a/obs=0017/trials=1000', 'gen=a/obs=0100/trials=240')).toBeLessThan(0);
    expect(compareJobKeys('gen=absolute/obs=0999', 'gen=power/obs=0000')).toBeLessThan(0);
    expect(compareJobKeys('gen=a/obs=17', 'gen=a/obs=0017')).not.toBe(0);
    expect(compareJobKeys('gen=a/obs=0017/trials=240', 'gen=a/obs=0017/trials=240')).toBe(0);
  });

  it('sorts a plan into tuple order', () => {
    const keys = ['gen=power/obs=0002/trials=240', 'gen=power/obs=0010/trials=60', 'gen=absolute/obs=0010/trials=1000', 'gen=power/obs=0002/trials=60', 'gen=absolute/obs=0002/trials=1000'];
    expect([...keys].sort(compareJobKeys)).toEqual([
      'gen=absolute/obs=0002/trials=1000',
      'gen=absolute/obs=0010/trials=1000',
      'gen=power/obs=0002/trials=60',
      'gen=power/obs=0002/trials=240',
      'gen=power/obs=0010/trials=60',
    ]);
  });

  it('rejects duplicate keys rather than keep one by input order', () => {
    expect(() => sortJobLines([line('A', 0, { won: 'A' }), line('A', 0, { won: 'B' })])).toThrow(/more than once/);
  });
});

/** A varied study with parameters, for whole-summary checks. */
function richStudy(): JobLine[] {
  const out: JobLine[] = [];
  let s = 12345;
  const u = (): number => (s = (s * 16807) % 2147483647) / 2147483647;
  const results: Result[] = [{ won: 'A' }, { won: 'B' }, { won: 'C' }, { tied: ['A', 'B'] }, { undecided: ['B', 'C'] }, { comparisonFailed: true }, { jobFailed: true }];
  for (const gen of ['A', 'B', 'C'])
    for (let obs = 0; obs < 12; obs++)
      for (const trials of [60, 240, 1000]) {
        const r = results[Math.floor(u() * results.length)];
        const base = line(gen, obs, r, { trials });
        if (base.status === 'failed') {
          out.push(base);
          continue;
        }
        const truth = { 'loss.p': 1 + 2 * u(), 'motor.sd': 0.1 + u() };
        const truthFree = { 'loss.p': Math.log(truth['loss.p']), 'motor.sd': Math.log(truth['motor.sd']) };
        const fits = base.fits.map((f) => ({
          ...f,
          parameters: Object.entries(truth).map(([name, v]) => {
            const value = v * (1 + 0.3 * (u() - 0.5));
            return { name, value, se: 0.1, lower95: value - 0.2 * u(), upper95: value + 0.2 * u(), free: Math.log(value), freeSe: 0.1, atBound: u() < 0.1 };
          }),
        }));
        out.push({ ...base, truth, truthFree, fits });
      }
  return out;
}

describe('summarize', () => {
  const lines = richStudy();
  const options = { candidates: CANDIDATES, generating: ['A', 'B', 'C'] };

  it('gives the same summary, to the bit, whatever the order of the lines', () => {
    const reference = summarize(lines, options);
    for (const seed of [1, 2, 3]) {
      const again = summarize(shuffled(lines, seed), options);
      expect(again).toEqual(reference);
      expect(JSON.stringify(again)).toBe(JSON.stringify(reference));
    }
    expect(JSON.stringify(summarizeByTrials(shuffled(lines, 7), options))).toBe(JSON.stringify(summarizeByTrials(lines, options)));
  });

  it('has the documented fields and is JSON-safe', () => {
    const s = summarize(lines, options);
    expect(Object.keys(s).sort()).toEqual(
      ['accuracy', 'balancedAccuracy', 'candidates', 'chance', 'confusion', 'criterion', 'failed', 'generating', 'inversion', 'jobs', 'recovery', 'tradeoffs', 'trials', 'undecided', 'verdicts'].sort(),
    );
    expect(JSON.parse(JSON.stringify(s))).toEqual(s);
    expect(s.criterion).toBe('aic');
    expect(s.trials).toEqual([60, 240, 1000]);
    expect(s.jobs).toBe(lines.length);
    expect(s.failed).toEqual(s.confusion.failed);
    expect(s.verdicts).toHaveLength(3);
    expect(s.recovery.map((r) => r.parameters.map((p) => p.name))).toEqual([
      ['loss.p', 'motor.sd'],
      ['loss.p', 'motor.sd'],
      ['loss.p', 'motor.sd'],
    ]);
  });

  it('splits by trial count, each part summarising only its own lines', () => {
    const by = summarizeByTrials(lines, options);
    expect(Object.keys(by)).toEqual(['60', '240', '1000']);
    const total = Object.values(by).reduce((s, x) => s + x.jobs!, 0);
    expect(total).toBe(lines.length);
    expect(by['240'].trials).toEqual([240]);
    // Counts add up across the parts.
    const summed = by['60'].confusion.counts.map((row, i) => row.map((v, j) => v! + by['240'].confusion.counts[i][j]! + by['1000'].confusion.counts[i][j]!));
    expect(summed).toEqual(summarize(lines, options).confusion.counts);
  });

  it('refuses to mix criteria unless one is named', () => {
    const mixed = [line('A', 0, { won: 'A' }), line('A', 1, { won: 'A' }, { criterion: 'bic' })];
    expect(() => summarize(mixed, { candidates: CANDIDATES, generating: ['A'] })).toThrow(/different criteria/);
    const s = summarize(mixed, { candidates: CANDIDATES, generating: ['A'], criterion: 'bic' });
    // The aic line is judged afresh by BIC: all three fits score 210, so it is a three-way tie.
    expect(s.confusion.redecided).toBe(1);
    expect(s.undecided).toEqual([1]);
  });
});

describe('jsonSafe', () => {
  it('replaces NaN and infinities by null and −0 by 0, deeply', () => {
    expect(jsonSafe({ a: NaN, b: [1, Infinity, -Infinity, -0], c: { d: 2.5, e: undefined, f: null, g: 'x', h: true } })).toEqual({
      a: null,
      b: [1, null, null, 0],
      c: { d: 2.5, f: null, g: 'x', h: true },
    });
    expect(Object.is(jsonSafe(-0), 0)).toBe(true);
  });

  it('refuses values that are not JSON data', () => {
    expect(() => jsonSafe({ m: new Map() })).toThrow(/\$\.m: a Map/);
    expect(() => jsonSafe([() => 1])).toThrow(/function/);
  });
});
