/**
 * The HTML report: every number shown is its raw value through the one
 * formatter, the raw values are summary.json and scenario.json unchanged,
 * the methods paragraph names what a reader needs to reproduce the study,
 * and sections follow what the run folder holds.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { copyRun, lossprobe, readJson, referenceRun, removeTemp, runTiny, tempDir, TINY, TINY_MODELS, TINY_OBSERVERS, TINY_SEED } from './helpers/studyFixture.js';
import { at, embeddedData, methodsText, numberSpans, rawSpans, reportHtml, svgTexts, untracedText } from './helpers/reportPage.js';
import { formatNumber, MISSING, type NumberStyle } from '../src/report/format.js';
import { escapeHtml, scopeIds } from '../src/report/html/context.js';
import { cellFill, textOn } from '../src/report/figures/heatmap.js';

// Numbers a page may print as fixed wording rather than data: the confidence level and the hash's name.
const FIXED_WORDING = ['95%', 'SHA-256'];

function checkNumbers(folder: string): number {
  const html = reportHtml(folder);
  const data = embeddedData(html);
  // The raw values are the run folder's files, unchanged.
  expect(data.summary).toEqual(readJson(join(folder, 'summary.json')));
  expect(data.scenario).toEqual(readJson(join(folder, 'scenario.json')));
  expect(html).not.toContain('section-failed');
  return checkSpans(html);
}

/** Every number span is its embedded raw value through the formatter, and no digit appears elsewhere. */
function checkSpans(html: string): number {
  const data = embeddedData(html);
  const spans = numberSpans(html);
  for (const s of spans) {
    const raw = at(data, s.path);
    expect(raw === null || typeof raw === 'number', `${JSON.stringify(s.path)} holds a number`).toBe(true);
    expect(s.text, JSON.stringify(s.path)).toBe(formatNumber(raw as number | null, s.style as NumberStyle));
  }
  for (const r of rawSpans(html)) expect(r.text).toBe(at(data, r.path));
  // No number reaches the reader by another road.
  let rest = untracedText(html);
  for (const w of FIXED_WORDING) rest = rest.split(w).join(' ');
  expect(rest.match(/.{0,40}\d.{0,40}/g) ?? []).toEqual([]);
  return spans.length;
}

describe('the one number formatter', () => {
  it('formats each style as documented', () => {
    expect(formatNumber(0.6667, 'percent')).toBe('67%');
    expect(formatNumber(0, 'percent')).toBe('0%');
    expect(formatNumber(1, 'percent')).toBe('100%');
    // Rounding must not hide a rare event or fake certainty.
    expect(formatNumber(0.004, 'percent')).toBe('<1%');
    expect(formatNumber(0.996, 'percent')).toBe('>99%');
    expect(formatNumber(12345, 'count')).toBe('12,345');
    expect(formatNumber(4242, 'id')).toBe('4242');
    expect(formatNumber(-0.1119, 'correlation')).toBe('−0.11');
    expect(formatNumber(-0.001, 'correlation')).toBe('0.00');
    expect(formatNumber(1.4431, 'value')).toBe('1.44');
    expect(formatNumber(1.4, 'value')).toBe('1.4');
    expect(formatNumber(0.018747, 'value')).toBe('0.0187');
    expect(formatNumber(120, 'value')).toBe('120');
    expect(formatNumber(-2.5e-5, 'value')).toBe('−2.5e-5');
    expect(formatNumber(123456, 'value')).toBe('1.23e+5');
    for (const bad of [null, undefined, NaN, Infinity]) expect(formatNumber(bad, 'value')).toBe(MISSING);
  });

  it('keeps inline figure ids apart and cell text legible', () => {
    const svg = '<svg><clipPath id="clip3"/><g clip-path="url(#clip3)"/></svg>';
    expect(scopeIds(svg, 'a.svg')).toBe('<svg><clipPath id="a_svg-1"/><g clip-path="url(#a_svg-1)"/></svg>');
    expect(escapeHtml(`<a href="x">'&`)).toBe('&lt;a href=&quot;x&quot;&gt;&#39;&amp;');
    // WCAG 2 contrast: white text only on the dark end of a ramp.
    expect(textOn(cellFill(1, 'blue'))).toBe('#ffffff');
    expect(textOn(cellFill(0, 'blue'))).toBe('#1b1b1b');
    expect(textOn(cellFill(-1, 'diverging'))).toBe('#ffffff');
  });
});

describe('report of a fit (real participants\' data)', () => {
  // export → fit --recovery --bootstrap 1 on the tiny study: about 15 s. The temp folders are removed by the next block's afterAll (removeTemp clears them all; the reference run is shared).
  let fit: string;
  beforeAll(() => {
    const root = tempDir();
    const e = lossprobe(['export', TINY, '--out', join(root, 'export'), '--quiet']);
    if (e.status !== 0) throw new Error(`export failed: ${e.stderr}`);
    fit = join(root, 'fit');
    const f = lossprobe(['fit', TINY, '--data', join(root, 'export', 'data.csv'), '--recovery', referenceRun().folder, '--bootstrap', '1', '--out', fit, '--quiet', '--workers', '2']);
    if (f.status !== 0) throw new Error(`fit failed: ${f.stderr}`);
  }, 240_000);

  it('is written by fit with its own sections; the recovery-study sections do not apply', () => {
    const html = reportHtml(fit);
    const ids = [...html.matchAll(/<section id="([^"]+)"/g)].map((m) => m[1]);
    expect(ids).toEqual(['fit-group', 'cautions', 'fit-participants', 'fit-recovery', 'fit-predictive', 'methods', 'files']);
    expect(html).toContain('Model comparison on participants');
    expect(html).not.toMatch(/synthetic datasets were best fitted|confusion/i);
  });

  it('shows every number as its raw value through the one formatter', () => {
    // Citations of the published methods are fixed wording, not data.
    const html = reportHtml(fit).split('Stephan et al. 2009').join(' ').split('Rigoux et al. 2014').join(' ');
    const data = embeddedData(html);
    expect(data.summary).toEqual(readJson(join(fit, 'summary.json')));
    expect(data.scenario).toEqual(readJson(join(fit, 'scenario.json')));
    expect(html).not.toContain('section-failed');
    const s = readJson<any>(join(fit, 'summary.json'));
    // Each participant: trials, and per model log-likelihood, Δ, weight and every parameter with its interval.
    const perParticipant = s.participants.map((p: any) => 1 + p.models.reduce((n: number, m: any) => n + 3 + 3 * m.parameters.length, 0));
    expect(checkSpans(html)).toBeGreaterThan(perParticipant.reduce((a: number, b: number) => a + b, 0));
    const paths = numberSpans(html).map((x) => JSON.stringify(x.path));
    expect(paths).toContain(JSON.stringify(['summary', 'group', 'randomEffects', 'protectedExceedanceProbability', 0]));
    expect(paths).toContain(JSON.stringify(['summary', 'participants', 0, 'models', 0, 'parameters', 0, 'upper95']));
    expect(paths).toContain(JSON.stringify(['summary', 'againstRecovery', 'participants', 0, 'choiceRightInSimulation']));
    // --bootstrap: one cell per participant, the replicates simulated from their best model.
    expect(paths.filter((p) => p.startsWith('["summary","bootstrap","results",') && p.endsWith(',"choseSource"]')).length).toBe(s.participants.length);
  });

  it('keeps the predictive Q–Q plots as figures and rewrites the same page with `lossprobe report`', () => {
    const s = readJson<any>(join(fit, 'summary.json'));
    const files = readdirSync(join(fit, 'figures')).sort();
    expect(files).toEqual(s.participants.map((p: any) => `predictive-${p.participant}.svg`).sort());
    const html = reportHtml(fit);
    for (const f of files) expect(html).toContain(`data-file="${f}"`);
    const copy = join(tempDir(), 'fit-again');
    copyRun(fit, copy);
    const r = lossprobe(['report', copy]);
    expect(r.status, r.stderr).toBe(0);
    expect(reportHtml(copy)).toBe(html);
  });

  it('writes a methods paragraph for the fit: data, participants, trials, models, criterion, evidence, seed, hashes', () => {
    const text = methodsText(reportHtml(fit));
    const s = readJson<any>(join(fit, 'summary.json'));
    for (const m of TINY_MODELS) expect(text).toContain(m);
    expect(text).toContain(`${s.group.participants} participants (${s.participants[0].trials} trials each`);
    expect(text).toContain(s.dataFile);
    expect(text).toContain('BIC');
    expect(text).toContain('minus half the BIC');
    expect(text).toContain(`scenario seed ${TINY_SEED}`);
    expect(text).toContain(s.provenance.scenarioHash);
    expect(text).toContain(s.provenance.fitHash);
  });

  it('shows the group warnings prominently when the models cannot be told apart', () => {
    const copy = join(tempDir(), 'fit-warned');
    copyRun(fit, copy);
    const path = join(copy, 'summary.json');
    const s = readJson<any>(path);
    s.group.warnings = ['squared and absolute cannot be told apart here'];
    writeFileSync(path, JSON.stringify(s, null, 2));
    expect(lossprobe(['report', copy]).status).toBe(0);
    const html = reportHtml(copy);
    const group = html.slice(html.indexOf('<section id="fit-group">'));
    expect(group.indexOf('fit-warnings')).toBeGreaterThan(0);
    expect(group.indexOf('fit-warnings')).toBeLessThan(group.indexOf('<table'));
    expect(group).toContain('squared and absolute cannot be told apart here');
  });
});

describe('report of a recovery study', () => {
  let folder: string;
  let sweep: string;
  beforeAll(() => {
    folder = referenceRun().folder;
    sweep = join(tempDir(), 'sweep');
    const r = runTiny(sweep, ['--workers', '1', '--trials', '60,120']);
    if (r.status !== 0) throw new Error(r.stderr);
  });
  afterAll(removeTemp);

  it('is written by run, with every figure also saved as an SVG file', () => {
    const html = reportHtml(folder);
    const files = readdirSync(join(folder, 'figures')).sort();
    expect(files).toEqual(expect.arrayContaining(['confusion.svg', 'inversion.svg', 'loss-shapes.svg']));
    for (const f of files) {
      expect(html).toContain(`data-file="${f}"`);
      expect(readFileSync(join(folder, 'figures', f), 'utf8')).toMatch(/^<svg[\s\S]*<\/svg>$/);
    }
    // Self-contained: no scripts, styles or fonts fetched from elsewhere.
    expect(html).not.toMatch(/(src|href)="(https?:)?\/\//);
    expect(html).toContain('id="cautions"');
  });

  it('is the same file, byte for byte, when rewritten from the run folder in another process', () => {
    const copy = join(tempDir(), 'again');
    copyRun(folder, copy);
    expect(lossprobe(['report', copy]).status).toBe(0);
    expect(reportHtml(copy)).toBe(reportHtml(folder));
    for (const f of readdirSync(join(folder, 'figures'))) expect(readFileSync(join(copy, 'figures', f), 'utf8'), f).toBe(readFileSync(join(folder, 'figures', f), 'utf8'));
  });

  it('shows every number as its raw value through the one formatter (single trial count)', () => {
    expect(checkNumbers(folder)).toBeGreaterThan(60);
  });

  it('shows every number as its raw value through the one formatter (sweep)', () => {
    expect(checkNumbers(sweep)).toBeGreaterThan(80);
    const html = reportHtml(sweep);
    expect(html).toContain('id="trial-sweep"');
    expect(readdirSync(join(sweep, 'figures'))).toContain('trial-curves.svg');
    expect(reportHtml(folder)).not.toContain('id="trial-sweep"');
  });

  it('prints the formatted values in the figures too', () => {
    const s = readJson<any>(join(folder, 'summary.json')).overall;
    const texts = svgTexts(readFileSync(join(folder, 'figures', 'confusion.svg'), 'utf8'));
    const c = s.confusion;
    const expected = c.rows.flatMap((_: string, i: number) => [...c.rate[i].map((r: number) => formatNumber(r, 'percent')), formatNumber(c.undecidedRate[i], 'percent'), formatNumber(c.failedRate[i], 'percent')]);
    const cells = texts.filter((t) => /%$/.test(t));
    expect(cells.sort()).toEqual(expected.sort());
    for (const m of s.recovery)
      for (const p of m.parameters) {
        const fig = readFileSync(join(folder, 'figures', `recovery-${p.name}.svg`), 'utf8');
        expect(svgTexts(fig)).toContain(`${m.generating}: r ${formatNumber(p.pearson, 'correlation')} · RMSE ${formatNumber(p.rmse, 'value')} · n ${formatNumber(p.n, 'count')}`);
      }
  });

  it('writes a methods paragraph naming every model, the observer count, the criterion and the seed', () => {
    const text = methodsText(reportHtml(folder));
    for (const m of TINY_MODELS) expect(text).toContain(m);
    expect(text).toContain(`${TINY_OBSERVERS} per generating model`);
    expect(text).toContain('(BIC)');
    expect(text).toContain(`master seed ${TINY_SEED}`);
    const summary = readJson<any>(join(folder, 'summary.json'));
    expect(text).toContain(summary.provenance.scenarioHash);
    expect(text).toContain(`generating model was chosen in ${formatNumber(summary.accuracy.estimate, 'percent')}`);
  });

  it('says plainly when the design cannot separate a model', () => {
    const copy = join(tempDir(), 'weak');
    copyRun(folder, copy);
    const path = join(copy, 'summary.json');
    const s = readJson<any>(path);
    // Make the first row a tie between the first two candidates in most datasets.
    const c = s.overall.confusion;
    c.counts[0] = c.counts[0].map(() => 0);
    c.rate[0] = c.rate[0].map(() => 0);
    c.undecided[0] = c.n[0];
    c.undecidedRate[0] = 1;
    c.ties[0] = [{ contenders: [c.columns[0], c.columns[1]], count: c.n[0], tied: c.n[0], undecided: 0, rate: 1, includesGenerating: true }];
    s.overall.verdicts[0] = { generating: c.rows[0], kind: 'not-identifiable', text: '' };
    writeFileSync(path, JSON.stringify(s, null, 2));
    const r = lossprobe(['report', copy]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(join(copy, 'report.html'));
    const text = methodsText(reportHtml(copy));
    expect(text).toContain(`This design cannot reliably separate ${c.rows[0]}`);
    expect(text).toContain(`For ${c.rows[0]}, it was not identifiable under this design`);
    expect(reportHtml(copy)).toMatch(/<li class="tone-bad"><span class="name">[^<]+<\/span>: <strong>not identifiable under this design<\/strong>/);
    checkNumbers(copy);
  });

  it('shows design variants side by side when the summary has them', () => {
    const copy = join(tempDir(), 'variants');
    copyRun(folder, copy);
    const path = join(copy, 'summary.json');
    const s = readJson<any>(path);
    s.variants = [
      { name: 'narrow-prior', overall: s.overall },
      { name: 'wide-prior', overall: s.overall },
    ];
    // And a loss parameter summarised by bins of its true value (as a free exponent would be).
    const p0 = s.overall.recovery[0].parameters[0];
    p0.bins = [
      { ...p0, lower: 6, upper: 7.5 },
      { ...p0, lower: 8, upper: 9.9 },
    ];
    writeFileSync(path, JSON.stringify(s, null, 2));
    expect(lossprobe(['report', copy]).status).toBe(0);
    const html = reportHtml(copy);
    expect(html).toContain('id="variants"');
    expect(html).toContain('by its true value</caption>');
    expect(readdirSync(join(copy, 'figures'))).toEqual(expect.arrayContaining(['variant-narrow-prior-confusion.svg', 'variant-wide-prior-confusion.svg']));
    checkNumbers(copy);
  });

  it('gives the preview a page of its own, built the same way', () => {
    const out = join(tempDir(), 'preview');
    const r = lossprobe(['preview', TINY, '--out', out]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(`Report: ${join(out, 'report.html')}`);
    const html = reportHtml(out);
    expect(checkSpans(html)).toBeGreaterThan(15);
    const data = embeddedData(html);
    expect(data.preview.estimates).toHaveLength(1);
    expect(html).toContain('id="cautions"');
    for (const f of readdirSync(out).filter((f) => f.endsWith('.svg'))) expect(html).toContain(`data-file="${f}"`);
  });

  it('draws the rest of the page when one section cannot be drawn, and says which', () => {
    const copy = join(tempDir(), 'odd');
    copyRun(folder, copy);
    const path = join(copy, 'summary.json');
    const s = readJson<any>(path);
    s.variants = [{ name: 'no-results-yet' }];
    writeFileSync(path, JSON.stringify(s, null, 2));
    const r = lossprobe(['report', copy]);
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/section 'variants'/);
    const html = reportHtml(copy);
    expect(html).toContain('section-failed');
    expect(html).toContain('id="methods"');
  });

  it('refuses a folder without a summary in one clear line, exit code 2', () => {
    const empty = tempDir();
    const r = lossprobe(['report', empty]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/summary\.json is missing/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
  });
});
