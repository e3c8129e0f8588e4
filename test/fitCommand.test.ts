/**
 * `lossprobe export`, `fit` and `grade` end to end with the built CLI on the
 * tiny fixture study (9 synthetic participants of 120 trials).
 *
 * The round trip: export the study's datasets, fit the exported CSV with
 * `fit`, grade fit's answers against the truth file; the graded summary must
 * equal `run`'s on the same seed. Fit starts are seeded from the data's
 * content and the CSV holds shortest round-trip decimals, so both paths fit
 * bit-identical datasets from identical starts.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parse as parseYaml, stringify as stringifyYaml } from 'yaml';
import { TINY, TINY_JOBS, exists, lossprobe, parseCsv, readJson, readText, referenceRun, removeTemp, summaryOf, tempDir } from './helpers/studyFixture.js';

let root: string;
let exported: string;
let fitted: string;

/** Numbers equal to 1e-12 relative (the transformed-space values go through toFree ∘ toParameter); everything else exactly. */
function expectSame(a: unknown, b: unknown, path = ''): void {
  if (typeof a === 'number' && typeof b === 'number') {
    if (Math.abs(a - b) > 1e-12 * Math.max(1, Math.abs(a))) throw new Error(`${path}: ${a} ≠ ${b}`);
    return;
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    const keys = new Set([...Object.keys(a), ...Object.keys(b)]);
    for (const k of keys) expectSame((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`);
    return;
  }
  if (a !== b) throw new Error(`${path}: ${JSON.stringify(a)} ≠ ${JSON.stringify(b)}`);
}

beforeAll(() => {
  root = tempDir();
  exported = join(root, 'export');
  fitted = join(root, 'fit');
  const e = lossprobe(['export', TINY, '--out', exported, '--quiet']);
  if (e.status !== 0) throw new Error(`export failed: ${e.stderr}`);
  const f = lossprobe(['fit', TINY, '--data', join(exported, 'data.csv'), '--out', fitted, '--quiet', '--workers', '2']);
  if (f.status !== 0) throw new Error(`fit failed: ${f.stderr}`);
}, 240_000);
afterAll(removeTemp);

describe('export', () => {
  it('writes the tidy CSV fit reads, with blind ids; the truth lives apart', () => {
    const rows = parseCsv(readText(join(exported, 'data.csv')));
    expect(rows[0]).toEqual(['participant', 'condition', 'stimulus', 'response']);
    expect(rows.length - 1).toBe(TINY_JOBS * 120);
    const ids = [...new Set(rows.slice(1).map((r) => r[0]))];
    expect(ids).toEqual(Array.from({ length: TINY_JOBS }, (_, i) => `s${String(i + 1).padStart(4, '0')}`));
    // Nothing in the data names a model.
    expect(readText(join(exported, 'data.csv'))).not.toMatch(/squared|absolute|asymmetric|gen=/);
    const truth = readJson<{ participants: { participant: string; key: string; truth: Record<string, number> }[] }>(join(exported, 'truth', 'truth.json'));
    expect(truth.participants.map((p) => p.participant).sort()).toEqual(ids);
    // Blind order: the ids do not follow the job order (seeded shuffle).
    expect(truth.participants.map((p) => p.key)).not.toEqual([...truth.participants.map((p) => p.key)].sort());
  });
});

describe('round trip: export → fit → grade equals run on the same seed', () => {
  it('the same datasets, fits, decisions and recovery figures', () => {
    const ref = referenceRun();
    const graded = join(root, 'grade');
    const g = lossprobe(['grade', join(exported, 'truth', 'truth.json'), '--fits', join(fitted, 'model-fits.csv'), '--out', graded]);
    expect(g.status, g.stderr).toBe(0);
    const a = summaryOf(ref.folder);
    const b = summaryOf(graded);
    expect(b.confusion).toEqual(a.confusion);
    expect(exists(join(graded, 'report.html'))).toBe(true);
    expect(b.accuracy).toEqual(a.accuracy);
    expectSame(b.overall, a.overall);
    // The fitted values themselves survive the CSV exactly: same log-likelihoods as run's jobs.
    const runFits = parseCsv(readText(join(ref.folder, 'fits.csv')));
    const fitFits = parseCsv(readText(join(fitted, 'model-fits.csv')));
    const llRun = runFits.slice(1).map((r) => Number(r[6])).sort();
    const llFit = fitFits.slice(1).map((r) => Number(r[6])).sort();
    expect(llFit).toEqual(llRun);
  });

  it('grade reads the one-row-per-participant form too (chosen model only)', () => {
    const rows = parseCsv(readText(join(fitted, 'model-fits.csv')));
    const h = rows[0];
    const chosen = rows.slice(1).filter((r) => r[h.indexOf('chosen')] === 'true');
    const answers = join(root, 'answers.csv');
    writeFileSync(answers, ['participant,model', ...chosen.map((r) => `${r[0]},${r[h.indexOf('model')]}`)].join('\n') + '\n');
    const out = join(root, 'grade-short');
    const g = lossprobe(['grade', join(exported, 'truth', 'truth.json'), '--fits', answers, '--out', out]);
    expect(g.status, g.stderr).toBe(0);
    expect(summaryOf(out).confusion).toEqual(summaryOf(referenceRun().folder).confusion);
  });

  it('grade refuses unknown participants and models, with line numbers, exit 2, no folder', () => {
    const bad = join(root, 'bad-answers.csv');
    writeFileSync(bad, 'participant,model\ns0001,squared\nzzz,squared\ns0002,quadratic\n');
    const out = join(root, 'grade-bad');
    const g = lossprobe(['grade', join(exported, 'truth', 'truth.json'), '--fits', bad, '--out', out]);
    expect(g.status).toBe(2);
    expect(g.stderr).toMatch(/line 3: participant 'zzz' is not in the truth file/);
    expect(g.stderr).toMatch(/line 4: model 'quadratic' is not a candidate/);
    expect(g.stderr).not.toMatch(/at .*\.js/);
    expect(exists(out)).toBe(false);
  });
});

describe('fit outputs', () => {
  it('per participant: criteria, differences, weights, intervals, decision, predictive check; group: counts and random effects', () => {
    const s = readJson<Record<string, any>>(join(fitted, 'summary.json'));
    expect(s.participants).toHaveLength(TINY_JOBS);
    const p = s.participants[0];
    expect(p.models).toHaveLength(3);
    for (const m of p.models) {
      expect(m.bic).toBeCloseTo(-2 * m.logLikelihood + 3 * Math.log(120), 9); // Schwarz (1978)
      expect(m.predictiveCheck.replicates).toBe(20);
      expect(m.predictiveCheck.ksDistance).toBeGreaterThanOrEqual(0);
      for (const q of m.parameters) expect(q.lower95).toBeLessThanOrEqual(q.estimate);
    }
    const weights = p.models.reduce((t: number, m: any) => t + m.weight, 0);
    expect(weights).toBeCloseTo(1, 12);
    const counts = s.group.winnerCounts.reduce((t: number, w: any) => t + w.participants, 0);
    expect(counts + s.group.undecided + s.group.failed).toBe(TINY_JOBS);
    const re = s.group.randomEffects;
    expect(re.logEvidence).toBe('bic');
    expect(re.protectedExceedanceProbability.reduce((t: number, v: number) => t + v, 0)).toBeCloseTo(1, 9);
    expect(s.caution).toMatch(/ethics board/);
    // The asymmetric model's level is fixed in this scenario, so it does not contain the absolute model: no nesting warning.
    expect(s.group.warnings.join(' ')).not.toMatch(/contains/);
    for (const f of ['model-fits.csv', 'parameter-estimates.csv', 'participants.csv', 'group.csv', 'predictive-checks.csv']) expect(exists(join(fitted, f))).toBe(true);
    expect(readText(join(fitted, 'figures', 'predictive-s0001.svg'))).toMatch(/^<svg[\s\S]*squared[\s\S]*<\/svg>$/);
  });

  it('a fit killed after 4 participants and resumed equals the uninterrupted fit', () => {
    const out = join(root, 'fit-resumed');
    const args = ['fit', TINY, '--data', join(exported, 'data.csv'), '--out', out, '--quiet', '--workers', '2'];
    const killed = lossprobe(args, { LOSSPROBE_EXIT_AFTER: '4' });
    expect(killed.status).toBe(137);
    expect(exists(join(out, 'summary.json'))).toBe(false);
    const resumed = lossprobe([...args, '--resume']);
    expect(resumed.status, resumed.stderr).toBe(0);
    expect(readText(join(out, 'model-fits.csv'))).toBe(readText(join(fitted, 'model-fits.csv')));
    expect(readText(join(out, 'group.csv'))).toBe(readText(join(fitted, 'group.csv')));
  }, 120_000);

  it('bad data: one message per problem with line numbers, exit 2, no run folder', () => {
    const bad = join(root, 'bad.csv');
    writeFileSync(bad, 'participant,condition,stimulus,response\np1,flash,10,12\np1,dark,10,12\np1,flash,ten,12\np1,flash,10,500\n');
    const out = join(root, 'fit-bad');
    const r = lossprobe(['fit', TINY, '--data', bad, '--out', out]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/line 3: unknown condition 'dark'/);
    expect(r.stderr).toMatch(/line 4: stimulus 'ten' is not a number/);
    expect(r.stderr).toMatch(/line 5: response 500 lies outside the response range \[0, 120\]/);
    expect(r.stderr).toMatch(/participant 'p1' .* has 1 valid trial; at least 20/);
    expect(exists(out)).toBe(false);
  });
});

describe('recovery reading, bootstrap and draw files', () => {
  it('reads winners against the recovery study, bootstraps best and runner-up, writes a draw file a scenario resamples', () => {
    const rows = readText(join(exported, 'data.csv')).split('\n');
    const two = join(root, 'two.csv');
    writeFileSync(two, [rows[0], ...rows.filter((l) => l.startsWith('s0001,') || l.startsWith('s0002,'))].join('\n') + '\n');
    const out = join(root, 'fit-extras');
    const draws = join(root, 'draws.csv');
    const r = lossprobe(['fit', TINY, '--data', two, '--out', out, '--quiet', '--workers', '2', '--bootstrap', '1', '--recovery', referenceRun().folder, '--draws-out', draws]);
    expect(r.status, r.stderr).toBe(0);
    const s = readJson<Record<string, any>>(join(out, 'summary.json'));
    expect(s.againstRecovery.participants).toHaveLength(2);
    expect(s.againstRecovery.note).toMatch(/exactly this scenario/);
    for (const a of s.againstRecovery.participants) {
      expect(a.recoveryTrials).toBe(120);
      expect(a.trialNote).toMatch(/exactly 120 trials/);
    }
    expect(s.bootstrap.results).toHaveLength(4); // 2 participants × (best, runner-up)
    for (const b of s.bootstrap.results) expect(b.replicates).toBe(1);
    const drawRows = parseCsv(readText(draws));
    expect(drawRows[0].slice(0, 2)).toEqual(['participant', 'model']);
    expect(drawRows.length - 1).toBe(6); // 2 participants × 3 models

    // A scenario whose synthetic observers resample those fitted vectors.
    const doc = parseYaml(readFileSync(TINY, 'utf8'));
    doc.generate = { observers: 2, drawFile: draws };
    doc.trials = 30;
    const scenario = join(root, 'from-pilot.yaml');
    writeFileSync(scenario, stringifyYaml(doc));
    const run = join(root, 'pilot-run');
    const rr = lossprobe(['run', scenario, '--out', run, '--quiet', '--workers', '2']);
    expect(rr.status, rr.stderr).toBe(0);
    const header = drawRows[0];
    const vectors = drawRows.slice(1).map((row) => ({ model: row[1], values: Object.fromEntries(header.slice(2).map((h, i) => [h, row[i + 2]])) }));
    for (const l of readText(join(run, 'jobs.jsonl')).trim().split('\n').map((x) => JSON.parse(x))) {
      const match = vectors.some((v) => v.model === l.generating && Object.entries(v.values).every(([k, x]) => x === '' || l.truth[k] === Number(x)));
      expect(match, `${l.key} truth ${JSON.stringify(l.truth)}`).toBe(true);
    }
  }, 180_000);
});

describe('fit --shard K/N and merge', () => {
  it('two shards merged give the unsharded fit exactly; a missing shard is named; --bootstrap is refused', () => {
    const base = join(root, 'fit-shards');
    const data = join(exported, 'data.csv');
    const one = lossprobe(['fit', TINY, '--data', data, '--out', base, '--quiet', '--workers', '1', '--shard', '1/2']);
    expect(one.status, one.stderr).toBe(0);
    // With only shard 1 of 2 done, merge names shard 2 and its participants, and writes nothing.
    const early = lossprobe(['merge', base, '--out', base]);
    expect(early.status).toBe(2);
    expect(early.stderr).toMatch(/shard 2 of 2 is missing/);
    expect(early.stderr).toMatch(/participant=s0002/);
    expect(exists(join(base, 'summary.json'))).toBe(false);
    const two = lossprobe(['fit', TINY, '--data', data, '--out', base, '--quiet', '--workers', '1', '--shard', '2/2']);
    expect(two.status, two.stderr).toBe(0);
    const m = lossprobe(['merge', base, '--out', base]);
    expect(m.status, m.stderr).toBe(0);
    // Byte for byte: same seed, same per-participant fits whatever the split or worker count.
    for (const f of ['summary.json', 'model-fits.csv', 'parameter-estimates.csv', 'participants.csv', 'group.csv', 'predictive-checks.csv'])
      expect(readText(join(base, f)), f).toBe(readText(join(fitted, f)));
    // The unsharded jobs.jsonl is in completion order; merge writes key order. Same lines.
    const sortedLines = (folder: string) => readText(join(folder, 'jobs.jsonl')).trim().split('\n').sort();
    expect(sortedLines(base)).toEqual(sortedLines(fitted));
    const boot = lossprobe(['fit', TINY, '--data', data, '--out', join(root, 'boot-shard'), '--shard', '1/2', '--bootstrap', '2']);
    expect(boot.status).toBe(2);
    expect(boot.stderr).toMatch(/--bootstrap cannot be combined with --shard/);
  }, 120_000);

  it('cluster --fit-data writes an array whose tasks run fit shards of the data, sized by its participants', () => {
    const out = join(root, 'fit-cluster');
    const data = join(exported, 'data.csv');
    const c = lossprobe(['cluster', TINY, '--shards', '3', '--fit-data', data, '--out', out]);
    expect(c.status, c.stderr).toBe(0);
    expect(c.stdout).toMatch(/9 jobs in 3 shards/);
    const array = readText(join(out, 'slurm', 'array.sbatch'));
    expect(array).toMatch(/"\$cli" fit \S+tiny-study\.yaml --data \S+data\.csv --shard "\$shard\/3"/);
    const tooMany = lossprobe(['cluster', TINY, '--shards', '10', '--fit-data', data, '--out', join(root, 'fit-cluster-10')]);
    expect(tooMany.status).toBe(2);
    expect(tooMany.stderr).toMatch(/exceeds the study's 9 jobs/);
  });
});
