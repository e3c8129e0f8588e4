/**
 * Engine pieces that need no worker pool, imported from the sources: the
 * order of job keys, and the synthetic observers' trial sequences (nested
 * prefixes across trial counts, condition balance in every block).
 */
import { describe, it, expect } from 'vitest';
import { compareKeys, jobKey, parseJobKey, planJobs } from '../src/engine/plan.js';
import { resolveStudy, type ResolvedStudy } from '../src/engine/resolve.js';
import { prefix, syntheticDataset } from '../src/engine/syntheticObserver.js';
import { scenarioSchema } from '../src/scenario/schema.js';

function study(overrides: Record<string, unknown>): ResolvedStudy {
  const s = scenarioSchema.parse({
    name: 'unit',
    seed: 31,
    prior: { family: 'gamma', shape: 2, scale: 9 },
    conditions: [{ name: 'flash', noise: { family: 'constant', sd: 8 } }],
    response: { lower: 0, upper: 120, motorSd: 2, lapseRate: 0.02 },
    models: [
      { name: 'squared', loss: { family: 'squared' } },
      { name: 'absolute', loss: { family: 'absolute' } },
    ],
    generate: { observers: 4, parameters: { 'noise.flash.sd': { uniform: [6, 10] } } },
    ...overrides,
  });
  return resolveStudy(s, 'unit');
}

const TWO_CONDITIONS = [
  { name: 'short', noise: { family: 'constant', sd: 10 } },
  { name: 'long', noise: { family: 'constant', sd: 5 } },
];

describe('job keys', () => {
  it('sort as tuples, numbers compared as numbers', () => {
    const expected = [
      'gen=absolute/obs=0002/trials=60',
      'gen=absolute/obs=0002/trials=240',
      'gen=absolute/obs=0002/trials=1000',
      'gen=absolute/obs=0010/trials=60',
      'gen=absolute/obs=0010/trials=1000',
      'gen=power/obs=0000/trials=240',
      'gen=squared/obs=0001/trials=60',
    ];
    // Plain string order would put trials=1000 before trials=240 and trials=60 last.
    expect([...expected].sort()).not.toEqual(expected);
    const shuffled = [expected[4], expected[2], expected[6], expected[0], expected[5], expected[3], expected[1]];
    expect([...shuffled].sort(compareKeys)).toEqual(expected);
    expect(compareKeys('gen=a/obs=0000/trials=240', 'gen=a/obs=0000/trials=1000')).toBeLessThan(0);
    expect(compareKeys('gen=a/obs=0002/trials=60', 'gen=a/obs=0010/trials=60')).toBeLessThan(0);
    // The generating model outranks the observer, which outranks the trial count.
    expect(compareKeys('gen=a/obs=0010/trials=1000', 'gen=b/obs=0000/trials=60')).toBeLessThan(0);
    expect(compareKeys('gen=a/obs=0001/trials=10', 'gen=a/obs=0000/trials=1000')).toBeGreaterThan(0);
    expect(compareKeys(expected[3], expected[3])).toBe(0);
  });

  it('round-trip through jobKey / parseJobKey, and the plan comes sorted', () => {
    expect(jobKey('power', 17, 240)).toBe('gen=power/obs=0017/trials=240');
    expect(parseJobKey('gen=power/obs=0017/trials=240')).toEqual({ key: 'gen=power/obs=0017/trials=240', generating: 'power', observer: 17, trials: 240 });
    expect(() => parseJobKey('power/17/240')).toThrow(/malformed job key/);

    const s = study({ trials: [1000, 60, 240], generate: { observers: 12 } });
    expect(s.trialCounts).toEqual([60, 240, 1000]);
    const plan = planJobs(s);
    expect(plan.length).toBe(2 * 12 * 3);
    expect(new Set(plan.map((j) => j.key)).size).toBe(plan.length);
    for (let i = 1; i < plan.length; i++) expect(compareKeys(plan[i - 1].key, plan[i].key)).toBeLessThan(0);
    // Numeric order inside one generating model: observers 0..11, each with 60, 240, 1000.
    const abs = plan.filter((j) => j.generating === 'absolute');
    expect(abs.map((j) => [j.observer, j.trials])).toEqual(Array.from({ length: 36 }, (_, i) => [Math.floor(i / 3), [60, 240, 1000][i % 3]]));
    for (const j of plan) expect(parseJobKey(j.key)).toEqual(j);
  });
});

describe('synthetic observers', () => {
  const sweep = study({ trials: [60, 240] });

  it('the dataset for 60 trials is the first 60 trials of the dataset for 240', () => {
    for (const g of sweep.generating)
      for (let o = 0; o < 4; o++) {
        const { truth, full } = syntheticDataset(sweep, g, o);
        expect(full.stimulus.length).toBe(240);
        const d60 = prefix(full, 60);
        const d240 = prefix(full, 240);
        expect(d60.stimulus.length).toBe(60);
        expect(Array.from(d60.stimulus)).toEqual(Array.from(d240.stimulus.slice(0, 60)));
        expect(Array.from(d60.condition)).toEqual(Array.from(d240.condition.slice(0, 60)));
        expect(Array.from(d60.response)).toEqual(Array.from(d240.response.slice(0, 60)));
        // A fresh draw of the same observer (as another worker would make) is the same dataset.
        const again = syntheticDataset(sweep, g, o);
        expect(again.truth).toEqual(truth);
        expect(Array.from(prefix(again.full, 60).response)).toEqual(Array.from(d60.response));
        expect(truth['noise.flash.sd']).toBeGreaterThanOrEqual(6);
        expect(truth['noise.flash.sd']).toBeLessThanOrEqual(10);
      }
    // ...and it depends on the observer: observers 0 and 1 differ.
    const a = syntheticDataset(sweep, 'squared', 0).full;
    const b = syntheticDataset(sweep, 'squared', 1).full;
    expect(Array.from(a.stimulus)).not.toEqual(Array.from(b.stimulus));
  });

  it('a sweep [60, 240] and a single count 240 draw the same 240-trial sequence', () => {
    const single = study({ trials: 240 });
    expect(single.hash).not.toBe(sweep.hash);
    for (const o of [0, 3]) {
      const x = syntheticDataset(sweep, 'absolute', o).full;
      const y = syntheticDataset(single, 'absolute', o).full;
      expect(Array.from(y.stimulus)).toEqual(Array.from(x.stimulus));
      expect(Array.from(y.condition)).toEqual(Array.from(x.condition));
      expect(Array.from(y.response)).toEqual(Array.from(x.response));
    }
  });

  it('every prefix that is a multiple of the number of conditions is exactly condition-balanced', () => {
    for (const conditions of [TWO_CONDITIONS, [...TWO_CONDITIONS, { name: 'mid', noise: { family: 'constant', sd: 7 } }]]) {
      const nCond = conditions.length;
      const s = study({ conditions, trials: [60, 240], generate: { observers: 4 } });
      const firstBlocks = new Set<string>();
      for (const g of s.generating)
        for (let o = 0; o < 4; o++) {
          const { full } = syntheticDataset(s, g, o);
          const cond = Array.from(full.condition);
          expect(cond.length).toBe(240);
          expect(cond.every((c) => Number.isInteger(c) && c >= 0 && c < nCond)).toBe(true);
          const counts = new Array<number>(nCond).fill(0);
          for (let n = 1; n <= cond.length; n++) {
            counts[cond[n - 1]]++;
            if (n % nCond === 0) expect(counts).toEqual(new Array<number>(nCond).fill(n / nCond));
          }
          for (const t of s.trialCounts) {
            const c = Array.from(prefix(full, t).condition);
            for (let k = 0; k < nCond; k++) expect(c.filter((x) => x === k).length).toBe(t / nCond);
          }
          firstBlocks.add(cond.slice(0, nCond).join(','));
        }
      // Blocks are shuffled, not always in the listed order.
      expect(firstBlocks.size).toBeGreaterThan(1);
    }
  });
});
