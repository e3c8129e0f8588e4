/**
 * `lossprobe size` end to end with the built tool: the sizing object in
 * summary.json, nested prefixes whose accuracy does not fall beyond a
 * one-sided Bonferroni-corrected McNemar test, variants ranked, the same
 * result whatever the worker count or an interruption, and flag errors.
 * Uses test/fixtures/sizing-study.yaml (closed-form likelihood, fast fits).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { writeFileSync } from 'node:fs';
import { lossprobe, tempDir, removeTemp, summaryOf, readText, exists, parseCsv, ROOT } from './helpers/studyFixture.js';

const FIXTURE = join(ROOT, 'test', 'fixtures', 'sizing-study.yaml');
const ARGS = ['--trials', '20,40,80,160', '--observers', '4', '--max-observers', '8', '--parameter', 'noise.standard.sd', '--width', '2.5', '--quiet'];

afterAll(removeTemp);

let reference: string | null = null;
function referenceSweep(): string {
  if (reference) return reference;
  const folder = join(tempDir(), 'ref');
  const r = lossprobe(['size', FIXTURE, '--out', folder, '--workers', '2', ...ARGS]);
  if (r.status !== 0) throw new Error(`size failed (${r.status}): ${r.stderr}`);
  reference = folder;
  return folder;
}

/** The sizing object without folder paths, for comparing runs in different folders. */
const sizingOf = (folder: string) => {
  const s = summaryOf(folder).sizing;
  if (s.designs) s.designs = s.designs.map((d: { folder?: string }) => ({ ...d, folder: undefined }));
  return s;
};

describe('lossprobe size', () => {
  it('writes a versioned sizing object, tidy CSV and a variant ranking', () => {
    const folder = referenceSweep();
    const s = summaryOf(folder).sizing;
    expect(s.version).toBe(1);
    expect(s.trialCounts).toEqual([20, 40, 80, 160]);
    expect(s.rule.reference).toMatch(/Howard, Ramdas, McAuliffe & Sekhon \(2021\)/);
    expect(s.rule.initialObservers).toBe(4);
    expect(s.rule.maxObservers).toBe(8);
    for (const p of s.points) {
      expect(p.observers).toBeGreaterThanOrEqual(4);
      expect(p.observers).toBeLessThanOrEqual(8);
      expect(p.lower).toBeLessThanOrEqual(p.rate);
      expect(p.upper).toBeGreaterThanOrEqual(p.rate);
    }
    expect(s.needed.map((n: { generating: string }) => n.generating)).toEqual(['squared', 'shifted']);
    expect(s.parameter.name).toBe('noise.standard.sd');
    expect(s.parameter.points.length).toBe(8);
    expect(s.caution).toMatch(/ethics board/);
    expect(s.designs.map((d: { variant: string }) => d.variant).sort()).toEqual(['base', 'narrow']);
    const csv = parseCsv(readText(join(folder, 'sizing.csv')));
    expect(csv[0].slice(0, 4)).toEqual(['target', 'generating', 'trials', 'observers']);
    expect(csv.length - 1).toBe(16);
    expect(exists(join(folder, 'variants', 'narrow', 'summary.json'))).toBe(true);
    expect(exists(join(folder, 'sizing-designs.csv'))).toBe(true);
    expect(summaryOf(folder).variants.map((v: { name: string }) => v.name)).toEqual(['base', 'narrow']);
  });

  it('accuracy with nested prefixes does not fall beyond a one-sided Bonferroni-corrected test', () => {
    const s = summaryOf(referenceSweep()).sizing;
    // Every point's observers are prefixes of the same observers at larger counts.
    expect(s.monotonicity.comparisons).toBe(3 * 2);
    expect(s.monotonicity.falls).toEqual([]);
  });

  it('gives the same sizing with one worker and after an interruption and --resume', () => {
    const ref = sizingOf(referenceSweep());
    const one = join(tempDir(), 'one');
    expect(lossprobe(['size', FIXTURE, '--out', one, '--workers', '1', ...ARGS]).status).toBe(0);
    expect(sizingOf(one)).toEqual(ref);
    const cut = join(tempDir(), 'cut');
    const first = lossprobe(['size', FIXTURE, '--out', cut, '--workers', '2', ...ARGS], { LOSSPROBE_EXIT_AFTER: '5' });
    expect(first.status).toBe(137);
    expect(lossprobe(['size', FIXTURE, '--out', cut, '--workers', '2', '--resume', ...ARGS]).status).toBe(0);
    expect(sizingOf(cut)).toEqual(ref);
  });

  it('writes the sweep figure and a report with a sizing section', () => {
    expect(readText(join(referenceSweep(), 'figures', 'sizing-accuracy.svg'))).toMatch(/^<svg/);
    const html = readText(join(referenceSweep(), 'report.html'));
    expect(html).toContain('<section id="sizing">');
    expect(html).not.toContain('section-failed');
    expect(readText(join(referenceSweep(), 'variants', 'narrow', 'report.html'))).toContain('<section id="sizing">');
  });

  it('preview ranks the variants side by side and writes preview.json', () => {
    const out = join(tempDir(), 'preview');
    const r = lossprobe(['preview', FIXTURE, '--out', out]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Designs side by side/);
    expect(r.stdout).toMatch(/narrow/);
    const p = JSON.parse(readText(join(out, 'preview.json')));
    expect(p.version).toBe(1);
    expect(p.designs.map((d: { variant: string }) => d.variant)).toEqual(['base', 'narrow']);
    const base = p.designs[0].analytic;
    expect(base.pairs[0].label).toBe('separable');
    expect(base.fisher[0].parameters).toEqual(['noise.standard.sd', 'motorSd']);
    expect(readText(join(out, 'report.html'))).toContain('<section id="distinguishability">');
    expect(parseCsv(readText(join(out, 'distinguishability.csv')))[0]).toEqual(['design', 'generating', 'candidate', 'kl_per_trial', 'llr_variance_per_trial', 'pair_label']);
  });

  it('rejects bad flags and bad variants with exit code 2, naming the problem', () => {
    const out = join(tempDir(), 'bad');
    const a = lossprobe(['size', FIXTURE, '--out', out, '--parameter', 'noise.standard.sd']);
    expect(a.status).toBe(2);
    expect(a.stderr).toMatch(/exactly one of --exclude VALUE or --width W/);
    const b = lossprobe(['size', FIXTURE, '--out', out, '--trials', '40']);
    expect(b.status).toBe(2);
    expect(b.stderr).toMatch(/at least two trial counts/);
    const file = join(tempDir(), 'bad-variant.yaml');
    writeFileSync(file, readText(FIXTURE).replace('stimulus: { family: gaussian, mean: 0, sd: 3 }', 'stimulus: { family: gaussian, mean: 0, spread: 3 }'));
    const c = lossprobe(['size', file, '--out', out]);
    expect(c.status).toBe(2);
    expect(c.stderr).toMatch(/variants/);
    expect(exists(out)).toBe(false);
  });
});
