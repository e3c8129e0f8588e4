/**
 * The command line as a user runs it: the built tool (dist/), never the sources.
 */
import { describe, it, expect } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const CLI = join(process.cwd(), 'dist', 'cli', 'main.js');
const run = (args: string[]) => spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8' });

describe('lossprobe preview', () => {
  it('previews the skewed demo and writes its figures', () => {
    const out = join(mkdtempSync(join(tmpdir(), 'lp-')), 'preview');
    const r = run(['preview', 'scenarios/skewed-magnitudes.yaml', '--out', out]);
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('hit-or-miss');
    for (const f of ['loss-shapes.svg', 'estimate-curves-brief-flash.svg', 'estimates.csv']) {
      expect(existsSync(join(out, f))).toBe(true);
    }
    const svg = readFileSync(join(out, 'loss-shapes.svg'), 'utf8');
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg).toContain('<path');
    const csv = readFileSync(join(out, 'estimates.csv'), 'utf8').trim().split('\n');
    expect(csv[0]).toBe('condition,model,measurement,estimate');
    // one condition × three models × 121 measurements
    expect(csv.length).toBe(1 + 1 * 3 * 121);
  });

  it('says plainly that symmetric losses coincide on the gaussian control', () => {
    const out = join(mkdtempSync(join(tmpdir(), 'lp-')), 'preview');
    const r = run(['preview', 'scenarios/gaussian-control.yaml', '--out', out]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Identical estimates under this design at these parameter values: squared and absolute/);
    expect(r.stdout).not.toMatch(/asymmetric and/);
  });

  it('accepts the observer on the command line', () => {
    const out = join(mkdtempSync(join(tmpdir(), 'lp-')), 'preview');
    const r = run(['preview', '--prior', 'gamma:shape=3,scale=6', '--noise', 'scalar:weber=0.2', '--loss', 'squared', '--loss', 'power:exponent=1.5', '--scale', '0,100', '--out', out]);
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('power');
  });

  it('rejects a bad scenario with one line per problem, exit code 2, no stack trace, nothing written', () => {
    const dir = mkdtempSync(join(tmpdir(), 'lp-'));
    const file = join(dir, 'bad.yaml');
    writeFileSync(
      file,
      [
        'prior: { family: gamma, shape: -1, scale: 5 }',
        'conditions: [{ name: a, noise: { family: constant, sd: 1 } }]',
        'response: { lower: 0, upper: 10, motorsd: 1 }',
        'models: [{ name: p, loss: { family: power, exponent: 0 } }]',
      ].join('\n'),
    );
    const out = join(dir, 'out');
    const r = run(['preview', file, '--out', out]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('prior.shape');
    expect(r.stderr).toContain('models.0.loss.exponent');
    expect(r.stderr).toMatch(/response.*unknown key.*'motorsd'/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(existsSync(out)).toBe(false);
  });

  it('rejects a loss window wider than a bounded prior', () => {
    const r = run(['preview', '--prior', 'uniform:lower=0,upper=4', '--noise', 'constant:sd=1', '--loss', 'hit-or-miss:window=3', '--scale', '0,10']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/hit-or-miss loss width 3 spans the whole prior support/);
  });

  it('rejects scalar noise with a prior reaching negative values', () => {
    const r = run(['preview', '--prior', 'gaussian:mean=5,sd=2', '--noise', 'scalar:weber=0.2', '--loss', 'squared', '--scale', '0,10']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/scalar noise needs a prior on positive values/);
  });

  it('reports an unknown family by name', () => {
    const r = run(['preview', '--prior', 'cauchy:loc=0', '--noise', 'constant:sd=1', '--loss', 'squared', '--scale', '0,10']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('prior');
  });
});
