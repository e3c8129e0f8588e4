/** Explicit trial lists: parsing, line-numbered errors, and use in synthetic observers. */
import { describe, it, expect } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { readTrialList } from '../src/scenario/trialList.js';
import { loadStudy } from '../src/engine/resolve.js';
import { syntheticDataset } from '../src/engine/syntheticObserver.js';

const dir = mkdtempSync(join(tmpdir(), 'lp-tl-'));
const file = (name: string, text: string) => {
  const p = join(dir, name);
  writeFileSync(p, text);
  return p;
};

describe('trial lists', () => {
  it('reads stimulus and condition columns', () => {
    const p = file('ok.csv', 'Stimulus,Condition,extra\n4,a,x\n8,b,y\n');
    expect(readTrialList(p, ['a', 'b'])).toEqual({ stimulus: [4, 8], condition: ['a', 'b'] });
  });

  it('reports every bad row with its line number', () => {
    const p = file('bad.csv', 'stimulus,condition\n4,a\nfour,a\n5,c\n');
    expect(() => readTrialList(p, ['a', 'b'])).toThrow(/line 3: stimulus 'four' is not a number[\s\S]*line 4: unknown condition 'c'/);
  });

  it('needs a condition column when there are several conditions', () => {
    const p = file('nocond.csv', 'stimulus\n4\n');
    expect(() => readTrialList(p, ['a', 'b'])).toThrow(/'condition' column/);
    expect(readTrialList(p, ['a'])).toEqual({ stimulus: [4], condition: ['a'] });
  });

  it('synthetic observers see only the listed stimuli, condition-balanced in every block', () => {
    file('targets.csv', 'stimulus,condition\n5,near\n10,near\n30,far\n60,far\n90,far\n');
    const scenario = file(
      'study.yaml',
      [
        'prior: { family: gamma, shape: 2, scale: 15 }',
        'conditions: [{ name: near, noise: { family: constant, sd: 4 } }, { name: far, noise: { family: constant, sd: 8 } }]',
        'response: { lower: 0, upper: 150 }',
        'models: [{ name: squared, loss: { family: squared } }]',
        'trialList: targets.csv',
        'trials: 40',
      ].join('\n'),
    );
    const study = loadStudy(scenario);
    const { full } = syntheticDataset(study, 'squared', 0);
    const near = new Set([5, 10]);
    const far = new Set([30, 60, 90]);
    for (let t = 0; t < full.stimulus.length; t++) {
      expect((full.condition[t] === 0 ? near : far).has(full.stimulus[t])).toBe(true);
    }
    for (let t = 2; t <= 40; t += 2) {
      const c0 = Array.from(full.condition.slice(0, t)).filter((c) => c === 0).length;
      expect(c0).toBe(t / 2);
    }
  });
});
