/**
 * `lossprobe run` end to end, as a user runs it: the built CLI (dist/) in a
 * child process with a real piscina pool, on the tiny fixture study
 * (test/fixtures/tiny-study.yaml, 9 jobs). Every test here spawns workers, so
 * they all live in this one file and run one after another.
 *
 * The single-worker, uninterrupted run is the reference every other run must
 * reproduce: a job is a pure function of the resolved study and its key.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { readFileSync, truncateSync, writeFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { parse as parseYaml, stringify as stringifyYaml } from 'yaml';
import {
  TINY,
  TINY_JOBS,
  TINY_MODELS,
  TINY_OBSERVERS,
  TINY_SEED,
  copyRun,
  exists,
  jobLines,
  lossprobeAsync,
  lossprobe,
  parseCsv,
  readJson,
  readText,
  referenceRun,
  removeTemp,
  runTiny,
  sortedJobs,
  summaryOf,
  tempDir,
  type ReferenceRun,
} from './helpers/studyFixture.js';

const pkg = JSON.parse(readFileSync(join(process.cwd(), 'package.json'), 'utf8')) as { version: string };
const NO_STACK = /\n\s+at /;

let ref: ReferenceRun;
beforeAll(() => {
  ref = referenceRun();
});
afterAll(removeTemp);

/** Every string and key anywhere in a JSON value, with its path. */
function walk(v: unknown, path: string, out: { path: string; key?: string; value?: unknown }[]): void {
  if (Array.isArray(v)) v.forEach((x, i) => walk(x, `${path}[${i}]`, out));
  else if (v && typeof v === 'object')
    for (const [k, x] of Object.entries(v)) {
      out.push({ path: `${path}.${k}`, key: k });
      walk(x, `${path}.${k}`, out);
    }
  else out.push({ path, value: v });
}

describe('the reference run', () => {
  it('finishes every job of the plan once, each on the first attempt', () => {
    const lines = jobLines(ref.folder).map((l) => JSON.parse(l));
    expect(lines.length).toBe(TINY_JOBS);
    expect(new Set(lines.map((l) => l.key)).size).toBe(TINY_JOBS);
    for (const l of lines) {
      expect(l.status).toBe('ok');
      expect(l.attempts).toBe(1);
      expect(l.fits.map((f: { model: string }) => f.model)).toEqual(TINY_MODELS);
      expect(l.trials).toBe(120);
    }
    for (const m of TINY_MODELS)
      expect(lines.filter((l) => l.generating === m).map((l) => l.observer).sort()).toEqual([0, 1, 2]);
    const info = readJson<Record<string, unknown>>(join(ref.folder, 'run-info.json'));
    expect(info).toMatchObject({ workers: 1, jobsRun: TINY_JOBS, jobsResumed: 0, jobsFailed: 0 });
  });
});

describe('determinism across worker counts', () => {
  it('1 and 2 workers give the same jobs.jsonl (sorted by key) and the same summary.json', () => {
    const out = join(tempDir(), 'two');
    const r = runTiny(out, ['--workers', '2']);
    expect(r.status, r.stderr).toBe(0);
    expect(sortedJobs(out)).toBe(sortedJobs(ref.folder));
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));
    expect(readJson<{ workers: number }>(join(out, 'run-info.json')).workers).toBe(2);
  });

  it('summary.json holds no timestamps, timings or host; run-info.json holds those', () => {
    const items: { path: string; key?: string; value?: unknown }[] = [];
    walk(summaryOf(ref.folder), '$', items);
    for (const it of items) {
      if (it.key !== undefined) expect(it.key, it.path).not.toMatch(/^(time|timestamp|date|seconds|elapsed|duration|started|finished|host|hostname|ms)$|(Time|Date|At|Seconds|Ms)$/);
      if (typeof it.value === 'string') expect(it.value, it.path).not.toMatch(/\d{4}-\d\d-\d\dT\d\d:\d\d/);
    }
    const text = readText(join(ref.folder, 'summary.json'));
    const info = readJson<Record<string, unknown>>(join(ref.folder, 'run-info.json'));
    expect(typeof info.seconds).toBe('number');
    expect(info.seconds as number).toBeGreaterThan(0);
    expect(String(info.finished)).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d/);
    expect(typeof info.host).toBe('string');
    expect(text).not.toContain(String(info.finished));
    expect(text).not.toContain(String(info.host));
  });
});

describe('resume', () => {
  it('a run killed mid-way (twice) and resumed equals the uninterrupted run', () => {
    const out = join(tempDir(), 'killed');
    const first = runTiny(out, ['--workers', '2'], { LOSSPROBE_EXIT_AFTER: '3' });
    expect(first.status, first.stderr).toBe(137);
    expect(jobLines(out).length).toBe(3);
    expect(exists(join(out, 'summary.json'))).toBe(false);

    const second = runTiny(out, ['--workers', '2', '--resume'], { LOSSPROBE_EXIT_AFTER: '3' });
    expect(second.status, second.stderr).toBe(137);
    expect(jobLines(out).length).toBe(6);
    expect(exists(join(out, 'summary.json'))).toBe(false);

    const last = runTiny(out, ['--workers', '1', '--resume']);
    expect(last.status, last.stderr).toBe(0);
    expect(sortedJobs(out)).toBe(sortedJobs(ref.folder));
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));
    expect(readJson(join(out, 'run-info.json'))).toMatchObject({ jobsRun: TINY_JOBS - 6, jobsResumed: 6, jobsFailed: 0 });
  });

  it('a half-written last line is cut off and its job redone', () => {
    const out = join(tempDir(), 'chopped');
    copyRun(ref.folder, out);
    const jobs = join(out, 'jobs.jsonl');
    const lines = jobLines(out);
    const lastLine = lines[lines.length - 1];
    const lastKey = JSON.parse(lastLine).key as string;
    const full = statSync(jobs).size;
    // Chop the last line in half: no trailing newline, not valid JSON.
    truncateSync(jobs, full - 1 - Math.floor(Buffer.byteLength(lastLine) / 2));
    const chopped = readText(jobs);
    expect(chopped.endsWith('\n')).toBe(false);
    expect(() => JSON.parse(chopped.slice(chopped.lastIndexOf('\n') + 1))).toThrow();

    const r = runTiny(out, ['--workers', '1', '--resume']);
    expect(r.status, r.stderr).toBe(0);
    const after = jobLines(out);
    expect(after.length).toBe(TINY_JOBS);
    expect(after.every((l) => l.length > 0)).toBe(true);
    expect(after.filter((l) => JSON.parse(l).key === lastKey).length).toBe(1);
    expect(readText(jobs).endsWith('\n')).toBe(true);
    expect(readJson(join(out, 'run-info.json'))).toMatchObject({ jobsRun: 1, jobsResumed: TINY_JOBS - 1 });
    expect(sortedJobs(out)).toBe(sortedJobs(ref.folder));
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));
  });

  it('Ctrl-C stops with exit code 130 keeping finished lines, and --resume completes the same run', async () => {
    const out = join(tempDir(), 'sigint');
    const { child, done } = lossprobeAsync(['run', TINY, '--out', out, '--workers', '2']);
    // Interrupt once the first job line is on disk.
    const deadline = Date.now() + 60_000;
    while (Date.now() < deadline) {
      if (exists(join(out, 'jobs.jsonl')) && readText(join(out, 'jobs.jsonl')).includes('\n')) break;
      await new Promise((r) => setTimeout(r, 50));
    }
    child.kill('SIGINT');
    const r = await done;
    if (r.status === 0) {
      // The machine finished all 9 jobs before the signal landed: nothing to interrupt.
      expect(jobLines(out).length).toBe(TINY_JOBS);
    } else {
      expect(r.status, r.stderr).toBe(130);
      expect(r.stderr).toMatch(/interrupted; \d+ finished jobs are kept .*--resume/);
      expect(r.stderr).not.toMatch(NO_STACK);
      const kept = jobLines(out);
      expect(kept.length).toBeGreaterThanOrEqual(1);
      expect(kept.length).toBeLessThan(TINY_JOBS);
      for (const l of kept) JSON.parse(l);
      expect(exists(join(out, 'summary.json'))).toBe(false);
      const resumed = runTiny(out, ['--workers', '2', '--resume']);
      expect(resumed.status, resumed.stderr).toBe(0);
    }
    expect(sortedJobs(out)).toBe(sortedJobs(ref.folder));
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));
  });

  it('resuming a finished run runs nothing and rewrites the same summary', () => {
    const out = join(tempDir(), 'finished');
    copyRun(ref.folder, out);
    const r = runTiny(out, ['--workers', '1', '--resume']);
    expect(r.status, r.stderr).toBe(0);
    expect(readText(join(out, 'jobs.jsonl'))).toBe(readText(join(ref.folder, 'jobs.jsonl')));
    expect(readJson(join(out, 'run-info.json'))).toMatchObject({ jobsRun: 0, jobsResumed: TINY_JOBS });
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));
  });
});

describe('a job whose worker throws', () => {
  it('is retried once, recorded as failed with its message, counted in the summary, and the run goes on', () => {
    const out = join(tempDir(), 'fault');
    const key = 'gen=absolute/obs=0001/trials=120';
    const r = runTiny(out, ['--workers', '2'], { LOSSPROBE_FAULT_KEY: key });
    expect(r.status, r.stderr).toBe(0);
    const lines = jobLines(out).map((l) => JSON.parse(l));
    expect(lines.length).toBe(TINY_JOBS);
    const bad = lines.filter((l) => l.key === key);
    expect(bad.length).toBe(1);
    expect(bad[0]).toMatchObject({ status: 'failed', attempts: 2, generating: 'absolute', observer: 1, trials: 120, comparison: null });
    expect(bad[0].error).toContain('fault injected');
    expect(lines.filter((l) => l.status === 'failed').length).toBe(1);
    // Every other job is exactly the reference's line.
    const refLines = new Map(jobLines(ref.folder).map((l) => [JSON.parse(l).key as string, l]));
    for (const l of jobLines(out)) if (JSON.parse(l).key !== key) expect(l).toBe(refLines.get(JSON.parse(l).key));

    const s = summaryOf(out);
    const i = s.models.indexOf('absolute');
    expect(s.failed).toEqual(TINY_MODELS.map((_, k) => (k === i ? 1 : 0)));
    expect(s.overall.confusion.n[i]).toBe(TINY_OBSERVERS);
    const refCounts = summaryOf(ref.folder).confusion.counts as number[][];
    // The failed job's choice in the reference run is gone from its row; the other rows are untouched.
    const refChoice = JSON.parse(refLines.get(key)!).comparison;
    expect(refChoice.status).toBe('won');
    const expected = refCounts.map((row) => [...row]);
    expected[i][TINY_MODELS.indexOf(refChoice.winner)]--;
    expect(s.confusion.counts).toEqual(expected);
    expect(readJson(join(out, 'run-info.json'))).toMatchObject({ jobsFailed: 1, jobsRun: TINY_JOBS });
    const fits = parseCsv(readText(join(out, 'fits.csv')));
    const row = fits.find((f) => f[0] === key)!;
    expect(row).toBeDefined();
    expect(row.join(',')).toContain('fault injected');
  });
});

describe('run folder protection', () => {
  it('--resume refuses a folder whose scenario hash differs', () => {
    const out = join(tempDir(), 'other');
    copyRun(ref.folder, out);
    const before = readText(join(out, 'jobs.jsonl'));
    const bySeed = runTiny(out, ['--resume', '--seed', '7']);
    expect(bySeed.status).toBe(2);
    expect(bySeed.stderr).toMatch(/^lossprobe: .*different scenario.*scenario hash differs/);
    expect(bySeed.stderr).not.toMatch(NO_STACK);

    const edited = join(tempDir(), 'tiny-study.yaml');
    const doc = parseYaml(readText(TINY));
    doc.generate.observers = 4;
    writeFileSync(edited, stringifyYaml(doc));
    const byFile = lossprobe(['run', edited, '--out', out, '--resume', '--quiet']);
    expect(byFile.status).toBe(2);
    expect(byFile.stderr).toMatch(/scenario hash differs/);
    expect(readText(join(out, 'jobs.jsonl'))).toBe(before);
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));
  });

  it('refuses an existing run folder without --resume, and --overwrite replaces it', () => {
    const out = join(tempDir(), 'existing');
    copyRun(ref.folder, out);
    const before = readText(join(out, 'jobs.jsonl'));
    const plain = runTiny(out);
    expect(plain.status).toBe(2);
    expect(plain.stderr).toMatch(/already holds a run; add --resume/);
    expect(plain.stderr).not.toMatch(NO_STACK);
    expect(readText(join(out, 'jobs.jsonl'))).toBe(before);

    const both = runTiny(out, ['--overwrite', '--resume']);
    expect(both.status).toBe(2);
    expect(both.stderr).toMatch(/--overwrite and --resume exclude each other/);
    expect(readText(join(out, 'jobs.jsonl'))).toBe(before);

    writeFileSync(join(out, 'stale-marker.txt'), 'from the old run\n');
    const over = runTiny(out, ['--overwrite', '--observers', '1', '--seed', '99', '--workers', '2']);
    expect(over.status, over.stderr).toBe(0);
    expect(exists(join(out, 'stale-marker.txt'))).toBe(false);
    const lines = jobLines(out).map((l) => JSON.parse(l));
    expect(lines.length).toBe(TINY_MODELS.length);
    expect(lines.every((l) => l.observer === 0)).toBe(true);
    const s = summaryOf(out);
    expect(s.seed).toBe(99);
    const hash = readJson<{ hash: string }>(join(out, 'scenario.json')).hash;
    expect(hash).not.toBe(readJson<{ hash: string }>(join(ref.folder, 'scenario.json')).hash);
    expect(s.provenance.scenarioHash).toBe(hash);
    expect(readJson(join(out, 'run-info.json'))).toMatchObject({ jobsResumed: 0, jobsRun: TINY_MODELS.length });
  });

  it('a bad flag is refused before the folder is touched: --overwrite keeps the old run, no new folder appears', () => {
    const out = join(tempDir(), 'keep');
    copyRun(ref.folder, out);
    const before = readText(join(out, 'jobs.jsonl'));
    const r = runTiny(out, ['--overwrite', '--workers', '0']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--workers expects a whole number/);
    expect(readText(join(out, 'jobs.jsonl'))).toBe(before);
    expect(summaryOf(out)).toEqual(summaryOf(ref.folder));

    const fresh = join(tempDir(), 'never');
    const r2 = runTiny(fresh, ['--workers', 'two']);
    expect(r2.status).toBe(2);
    expect(exists(fresh)).toBe(false);
  });
});

describe('bad scenario files', () => {
  const cases: { what: string; edit: (d: any) => void; expect: RegExp[] }[] = [
    {
      what: 'an unknown key',
      edit: (d) => (d.fitting.start = 2),
      expect: [/fitting: unknown key\(s\) 'start'/],
    },
    {
      what: 'an unknown top-level key',
      edit: (d) => (d.trails = 60),
      expect: [/\(top level\): unknown key\(s\) 'trails'/],
    },
    {
      what: 'an unknown model in generate.models',
      edit: (d) => (d.generate.models = ['squared', 'cubic']),
      expect: [/generate\.models\.1: 'cubic' is not one of the models/],
    },
    {
      what: 'a draw for a parameter no model has',
      edit: (d) => (d.generate.parameters['loss.exponent'] = { uniform: [1, 2] }),
      expect: [/generate\.parameters\.loss\.exponent: no generating model has a parameter of that name/],
    },
    {
      what: 'a draw for a parameter only a non-generating model has',
      edit: (d) => {
        d.generate.models = ['squared', 'absolute'];
        d.generate.parameters['loss.level'] = { uniform: [0.6, 0.9] };
      },
      expect: [/generate\.parameters\.loss\.level: no generating model has a parameter of that name/],
    },
  ];
  for (const c of cases)
    it(`rejects ${c.what}: exit 2, the field path, no stack trace, no run folder`, () => {
      const dir = tempDir();
      const file = join(dir, 'bad.yaml');
      const doc = parseYaml(readText(TINY));
      c.edit(doc);
      writeFileSync(file, stringifyYaml(doc));
      const out = join(dir, 'run');
      const r = lossprobe(['run', file, '--out', out, '--quiet']);
      expect(r.status, r.stderr).toBe(2);
      expect(r.stderr.startsWith('lossprobe: ')).toBe(true);
      expect(r.stderr).toContain(file);
      for (const re of c.expect) expect(r.stderr).toMatch(re);
      expect(r.stderr).not.toMatch(NO_STACK);
      expect(r.stderr).not.toMatch(/internal error/);
      expect(r.stdout).toBe('');
      expect(exists(out)).toBe(false);
    });
});

describe('--json', () => {
  it('prints summary.json to stdout: parseable, the same content as the file, nothing else', () => {
    const printed = JSON.parse(ref.stdout);
    expect(printed).toEqual(summaryOf(ref.folder));
    expect(ref.stdout).not.toMatch(/Recovery study|Run folder/);
    expect(ref.stderr).not.toMatch(/jobs \d+\/\d+/);
  });
});

describe('output contract', () => {
  it('summary.json carries the versioned contract fields', () => {
    const s = summaryOf(ref.folder);
    const R = TINY_MODELS.length;
    expect(s.version).toBe(1);
    expect(s.seed).toBe(TINY_SEED);
    expect(s.models).toEqual(TINY_MODELS);
    expect(s.provenance).toMatchObject({ toolVersion: pkg.version, node: process.version });
    expect(s.provenance.scenarioHash).toMatch(/^[0-9a-f]{64}$/);
    expect(s.provenance.scenarioHash).toBe(readJson<{ hash: string }>(join(ref.folder, 'scenario.json')).hash);

    const { counts, rate } = s.confusion as { counts: number[][]; rate: number[][] };
    expect(counts.length).toBe(R);
    expect(rate.length).toBe(R);
    for (let i = 0; i < R; i++) {
      expect(counts[i].length).toBe(R);
      expect(rate[i].length).toBe(R);
      const decided = counts[i].reduce((a, b) => a + b, 0);
      expect(decided + s.undecided[i] + s.failed[i]).toBe(TINY_OBSERVERS);
      for (let j = 0; j < R; j++) {
        expect(Number.isInteger(counts[i][j])).toBe(true);
        expect(rate[i][j]).toBeCloseTo(counts[i][j] / TINY_OBSERVERS, 12);
      }
    }
    expect(s.failed).toEqual(new Array(R).fill(0));

    const inv = s.inversion.rate as (number | null)[][];
    expect(inv.length).toBe(R);
    for (let j = 0; j < R; j++) {
      const col = inv.map((row) => row[j]);
      const chosen = counts.reduce((a, row) => a + row[j], 0);
      if (chosen === 0) expect(col.every((x) => x === null)).toBe(true);
      else expect((col as number[]).reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
    }

    const total = counts.reduce((a, row, i) => a + row[i], 0);
    const { estimate, lower, upper } = s.accuracy;
    expect(estimate).toBeCloseTo(total / TINY_JOBS, 12);
    expect(lower).toBeGreaterThanOrEqual(0);
    expect(lower).toBeLessThanOrEqual(estimate);
    expect(upper).toBeGreaterThanOrEqual(estimate);
    expect(upper).toBeLessThanOrEqual(1);

    expect(Array.isArray(s.recovery)).toBe(true);
    expect(s.recovery.map((r: { generating: string }) => r.generating)).toEqual(TINY_MODELS);
    for (const r of s.recovery) {
      expect(r.jobs).toBe(TINY_OBSERVERS);
      expect(r.parameters.map((p: { name: string }) => p.name)).toEqual(['noise.flash.sd', 'motorSd', 'lapseRate']);
    }
  });

  it('the CSV files are tidy: one header row, the same number of fields in every row', () => {
    const expectedRows: Record<string, number> = {
      'fits.csv': TINY_JOBS * TINY_MODELS.length,
      'parameters.csv': TINY_JOBS * TINY_MODELS.length * 3,
      'confusion.csv': TINY_MODELS.length * (TINY_MODELS.length + 2),
      'inversion.csv': TINY_MODELS.length * TINY_MODELS.length,
    };
    const tables: Record<string, string[][]> = {};
    for (const [file, n] of Object.entries(expectedRows)) {
      const text = readText(join(ref.folder, file));
      expect(text.endsWith('\n'), file).toBe(true);
      const rows = parseCsv(text);
      const [header, ...body] = rows;
      expect(header.length, file).toBeGreaterThan(1);
      expect(new Set(header).size, `${file}: unique column names`).toBe(header.length);
      expect(header.every((h) => /^[a-z][a-z0-9_]*$/.test(h)), `${file}: header ${header.join(',')}`).toBe(true);
      expect(body.length, file).toBe(n);
      body.forEach((r, k) => expect(r.length, `${file} row ${k + 2}`).toBe(header.length));
      tables[file] = rows;
    }
    // confusion.csv carries the same counts as summary.json.
    const s = summaryOf(ref.folder);
    const [h, ...rows] = tables['confusion.csv'];
    const col = (name: string) => h.indexOf(name);
    for (const name of ['generating', 'chosen', 'count']) expect(col(name)).toBeGreaterThanOrEqual(0);
    TINY_MODELS.forEach((g, i) =>
      TINY_MODELS.forEach((c, j) => {
        const row = rows.find((r) => r[col('generating')] === g && r[col('chosen')] === c)!;
        expect(Number(row[col('count')])).toBe(s.confusion.counts[i][j]);
      }),
    );
    // fits.csv: one row per (job, candidate), jobs in key order.
    const [fh, ...fr] = tables['fits.csv'];
    const jobCol = fh.indexOf('job');
    expect(jobCol).toBeGreaterThanOrEqual(0);
    expect(new Set(fr.map((r) => r[jobCol])).size).toBe(TINY_JOBS);
  });
});
