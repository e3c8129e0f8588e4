/**
 * `lossprobe plan` as users run it: the BUILT tool (dist/) in a child process,
 * on the small Gaussian fixture (test/fixtures/plan-gaussian.yaml) with a
 * pool of 6 participants and 2 trial counts (12 fits of milliseconds each).
 * Output contract, worker-count independence, reuse of a finished pool,
 * shards of the pool, and bad input (exit 2, nothing written).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { exists, lossprobe, parseCsv, readJson, readText, removeTemp, tempDir } from './helpers/studyFixture.js';
import { at, embeddedData, numberSpans, reportHtml, svgTexts, untracedText } from './helpers/reportPage.js';
import { formatNumber, type NumberStyle } from '../src/report/format.js';

const FIXTURE = join(process.cwd(), 'test', 'fixtures', 'plan-gaussian.yaml');
const SMALL = ['--participants', '4,8', '--trials', '20,40', '--pool', '6', '--resamples', '50', '--pool-replicates', '3', '--quiet'];

afterAll(removeTemp);

function plan(folder: string, args: string[] = [], file = FIXTURE) {
  return lossprobe(['plan', file, '--out', folder, ...SMALL, ...args]);
}

describe('lossprobe plan', () => {
  const dir = tempDir();
  const two = join(dir, 'two-workers');

  it('writes summary.json (pool recovery + plan), plan.csv, the pool CSVs and the heatmap, and prints the grid with its cautions', () => {
    const r = plan(two, ['--workers', '2']);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/participants ↓ \/ trials →/);
    expect(r.stdout).toMatch(/a study is a resample of simulated participants/);
    expect(r.stdout).toMatch(/Studies share participants/);
    expect(r.stdout).toMatch(/ethics board and statistician/);
    const s = readJson<any>(join(two, 'summary.json'));
    // The pool's recovery summary, as every run folder has it, plus the plan object.
    expect(s).toMatchObject({ version: 1, name: 'plan-gaussian', seed: 808, generating: ['asymmetric'] });
    expect(s.confusion.counts).toHaveLength(1);
    expect(s.plan).toMatchObject({ version: 1, majorityModel: 'asymmetric', participants: [4, 8], trials: [20, 40], target: 0.8, resamples: 50 });
    expect(s.plan.pool).toMatchObject({ evidence: 'bic', simulatedPerModel: 6, usable: { asymmetric: 6 } });
    expect(s.plan.grid).toHaveLength(4);
    for (const c of s.plan.grid) {
      expect(c.correct.n).toBe(50);
      expect(c.correct.lower).toBeLessThanOrEqual(c.correct.estimate);
      expect(c.correct.upper).toBeGreaterThanOrEqual(c.correct.estimate);
      expect(c.correct.successes + c.wrongConclusion + c.noConclusion).toBe(50);
      // The pool-aware interval is never narrower than the resampling one.
      expect(c.correctWithPoolError.lower).toBeLessThanOrEqual(c.correct.lower + 1e-12);
      expect(c.correctWithPoolError.upper).toBeGreaterThanOrEqual(c.correct.upper - 1e-12);
    }
    // N = 8 from a pool of 6 must raise the pool-size warning.
    expect(s.plan.notes.join('\n')).toMatch(/Warning: at N = 4, 8 a study draws at least half/);
    const csv = parseCsv(readText(join(two, 'plan.csv')));
    expect(csv[0]).toEqual(['participants', 'trials', 'studies', 'correct', 'p_correct', 'lower_95', 'upper_95', 'lower_95_with_pool', 'upper_95_with_pool', 'effective_studies', 'pool_sd', 'wrong_conclusion', 'no_conclusion', 'mean_majority_score', 'reaches_target', 'cost']);
    expect(csv).toHaveLength(5);
    expect(readText(join(two, 'figures', 'plan-heatmap.svg'))).toMatch(/^<svg/);
    for (const f of ['fits.csv', 'parameters.csv', 'confusion.csv', 'inversion.csv']) expect(exists(join(two, f))).toBe(true);
    expect(readText(join(two, 'jobs.jsonl')).trim().split('\n')).toHaveLength(12);
  });

  it('writes the HTML report with the plan section: every number traceable to summary.json, the heatmap among the figures', () => {
    const html = reportHtml(two);
    expect(html).toContain('<section id="group-plan">');
    expect(html).not.toContain('section-failed');
    expect(html).toMatch(/a resample of simulated participants, not a fresh simulation/);
    const data = embeddedData(html);
    expect(data.summary).toEqual(readJson(join(two, 'summary.json')));
    // As the report's own tests require (test/reportHtml.test.ts): each number span is its raw value through the formatter…
    const spans = numberSpans(html);
    expect(spans.filter((s) => s.path[1] === 'plan').length).toBeGreaterThan(10);
    for (const s of spans) expect(s.text, JSON.stringify(s.path)).toBe(formatNumber(at(data, s.path) as number | null, s.style as NumberStyle));
    // …and no digit reaches the reader any other way (the report's fixed wording '95%' and 'SHA-256' excepted).
    expect(untracedText(html).split('95%').join(' ').split('SHA-256').join(' ').match(/.{0,40}\d.{0,40}/g) ?? []).toEqual([]);
    const heatmap = readText(join(two, 'figures', 'plan-heatmap.svg'));
    const labels = svgTexts(heatmap);
    for (const c of data.summary.plan.grid) expect(labels).toContain(formatNumber(c.correct.estimate, 'percent'));
  });

  it('gives the same files with one worker', () => {
    const one = join(dir, 'one-worker');
    expect(plan(one, ['--workers', '1']).status).toBe(0);
    for (const f of ['summary.json', 'plan.csv']) expect(readText(join(one, f))).toBe(readText(join(two, f)));
  });

  it('reuses a finished pool when only the participant grid or resamples change (--resume), and prints JSON on request', () => {
    const jobs = readText(join(two, 'jobs.jsonl'));
    const r = lossprobe(['plan', FIXTURE, '--out', two, ...SMALL, '--participants', '2,5', '--resamples', '40', '--resume', '--json']);
    expect(r.status).toBe(0);
    expect(readText(join(two, 'jobs.jsonl'))).toBe(jobs);
    const s = JSON.parse(r.stdout);
    expect(s.plan.participants).toEqual([2, 5]);
    expect(s.plan.grid.map((c: any) => c.studies)).toEqual([40, 40, 40, 40]);
    // Without --resume the folder is protected.
    const again = plan(two);
    expect(again.status).toBe(2);
    expect(again.stderr).toMatch(/--resume/);
  });

  it('fits one shard of the pool without resampling; merged shards, resumed, give the unsharded plan', () => {
    const base = join(dir, 'sharded');
    const r = plan(base, ['--shard', '1/2', '--workers', '1']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Shard 1 of 2/);
    expect(r.stdout).toMatch(/lossprobe merge/);
    const folder = join(base, 'shard-001-of-002');
    expect(readText(join(folder, 'jobs.jsonl')).trim().split('\n')).toHaveLength(6);
    expect(exists(join(folder, 'summary.json'))).toBe(false);
    expect(readJson<any>(join(folder, 'shard.json')).command).toBe('plan');
    expect(plan(base, ['--shard', '2/2', '--workers', '1']).status).toBe(0);
    const merged = lossprobe(['merge', folder, join(base, 'shard-002-of-002'), '--out', base]);
    expect(merged.stderr).toBe('');
    expect(merged.status).toBe(0);
    expect(merged.stdout).toMatch(/resample its studies/);
    expect(plan(base, ['--resume']).status).toBe(0);
    for (const f of ['summary.json', 'plan.csv']) expect(readText(join(base, f))).toBe(readText(join(dir, 'one-worker', f)));
  });

  it('rejects a bad plan section with exit code 2, naming the field, and writes nothing', () => {
    const bad = join(dir, 'bad.yaml');
    writeFileSync(bad, readFileSync(FIXTURE, 'utf8').replace('population: { asymmetric: 1 }', 'population: { asymmetric: 0.6, squared: 0.3, hit: 0.1 }'));
    const out = join(dir, 'never');
    const r = plan(out, [], bad);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/plan\.population\.hit: 'hit' is not one of the models/);
    expect(r.stderr).not.toMatch(/at .*\.js:\d+/);
    expect(exists(out)).toBe(false);
    writeFileSync(bad, readFileSync(FIXTURE, 'utf8').replace('population: { asymmetric: 1 }', 'population: { asymmetric: 0.5, squared: 0.4 }'));
    expect(plan(out, [], bad).stderr).toMatch(/plan\.population: the shares must sum to 1 \(they sum to 0\.9\)/);
    writeFileSync(bad, readFileSync(FIXTURE, 'utf8').replace('  resamples: 200', '  resamples: 200\n  analysis: { method: random-effects, evidence: cv }'));
    expect(plan(out, [], bad).stderr).toMatch(/plan\.analysis\.evidence: cross-validated evidence needs fitting\.criterion: cv/);
    writeFileSync(bad, readFileSync(FIXTURE, 'utf8').replace(/\nplan:[\s\S]*$/, '\n'));
    const noPlan = plan(out, [], bad);
    expect(noPlan.status).toBe(2);
    expect(noPlan.stderr).toMatch(/has no 'plan' section/);
    expect(plan(out, ['--participants', '1,4']).stderr).toMatch(/--participants expects whole numbers from 2/);
    expect(exists(out)).toBe(false);
  });
});
