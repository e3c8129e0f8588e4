/**
 * Shards and merge end to end with the built CLI, no scheduler needed: the
 * array script written by `lossprobe cluster` is run by bash with the
 * environment variables Slurm would set (SLURM_ARRAY_TASK_ID,
 * SLURM_CPUS_PER_TASK), one task after another, and the merge script joins
 * the shards. The merged run must equal the single-machine run of the tiny
 * fixture study (same seed), and merge must refuse, with a clear message and
 * without writing anything, whatever is not one complete split of one study.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { appendFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { compareJobKeys } from '../src/analysis/jobKeys.js';
import {
  TINY,
  TINY_JOBS,
  TINY_SEED,
  copyRun,
  exists,
  jobLines,
  lossprobe,
  readJson,
  readText,
  referenceRun,
  removeTemp,
  runTiny,
  sortedJobs,
  tempDir,
} from './helpers/studyFixture.js';

const NO_STACK = /\n\s+at /;
const SHARDS = ['shard-001-of-003', 'shard-002-of-003', 'shard-003-of-003'];
let ref: string;
let base: string;

/** Run a generated Slurm script with bash as Slurm would start it, minus Slurm. */
function asSlurm(script: string, env: Record<string, string> = {}) {
  const clean: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!k.startsWith('SLURM_') && !k.startsWith('LOSSPROBE_')) clean[k] = v;
  return spawnSync('bash', [script], { encoding: 'utf8', env: { ...clean, ...env }, timeout: 180_000 });
}

beforeAll(() => {
  ref = referenceRun().folder;
  base = join(tempDir(), 'study');
  const gen = lossprobe(['cluster', TINY, '--shards', '3', '--cpus', '1', '--out', base]);
  if (gen.status !== 0) throw new Error(gen.stderr);
  for (const k of [1, 2, 3]) {
    const r = asSlurm(join(base, 'slurm', 'array.sbatch'), { SLURM_ARRAY_TASK_ID: String(k), SLURM_CPUS_PER_TASK: '1' });
    if (r.status !== 0) throw new Error(`array task ${k}: ${r.stderr}`);
  }
});
afterAll(removeTemp);

function refuses(args: string[], pattern: RegExp, out?: string) {
  const r = lossprobe(args);
  expect(r.status, r.stdout + r.stderr).toBe(2);
  expect(r.stderr).toMatch(pattern);
  expect(r.stderr).not.toMatch(NO_STACK);
  if (out) expect(exists(out), `${out} must not be created`).toBe(false);
  return r.stderr;
}

describe('cluster', () => {
  it('writes the array, merge and submit scripts and says how to submit and resume', () => {
    expect(readdirSync(join(base, 'slurm')).sort()).toEqual(['array.sbatch', 'merge.sbatch', 'submit.sh']);
    expect(readdirSync(join(base, 'logs'))).toEqual([]);
    const array = readText(join(base, 'slurm', 'array.sbatch'));
    expect(array).toContain('#SBATCH --array=1-3\n');
    expect(array).toContain('#SBATCH --cpus-per-task=1\n');
    expect(array).toContain('#SBATCH --time=02:00:00\n');
    const out = join(tempDir(), 'gen');
    const r = lossprobe(['cluster', TINY, '--shards', '2', '--partition', 'short', '--time', '1-00:00:00', '--cpus', '8', '--seed', '11', '--out', out]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(`bash ${join(out, 'slurm', 'submit.sh')}`);
    expect(r.stdout).toContain(`sbatch --array=K ${join(out, 'slurm', 'array.sbatch')}`);
    const text = readText(join(out, 'slurm', 'array.sbatch'));
    expect(text).toContain('#SBATCH --partition=short\n');
    expect(text).toContain('#SBATCH --time=1-00:00:00\n');
    expect(text).toContain(`run ${TINY} --seed 11 --shard "$shard/2"`);
  });

  it('refuses bad flags before writing anything', () => {
    const out = join(tempDir(), 'never');
    refuses(['cluster', TINY, '--shards', '10', '--out', out], /--shards 10 exceeds the study's 9 jobs/, out);
    refuses(['cluster', TINY, '--shards', '0', '--out', out], /--shards expects a whole number/, out);
    refuses(['cluster', TINY, '--shards', '2', '--time', '2h', '--out', out], /--time expects a Slurm time limit/, out);
    refuses(['cluster', TINY, '--shards', '2', '--partition', 'a b', '--out', out], /--partition expects a Slurm partition name/, out);
    refuses(['cluster', TINY, '--shards', '2', '--out', join(tempDir(), 'with space')], /must not contain blanks/);
  });
});

describe('run --shard', () => {
  it('runs its slice of the plan (the fixed round-robin assignment) into its own folder with shard.json', () => {
    const plan = jobLines(ref).map((l) => JSON.parse(l).key as string).sort(compareJobKeys);
    for (const [i, name] of SHARDS.entries()) {
      const keys = jobLines(join(base, name)).map((l) => JSON.parse(l).key as string).sort(compareJobKeys);
      expect(keys).toEqual(plan.filter((_, j) => j % 3 === i));
      expect(readJson(join(base, name, 'shard.json'))).toMatchObject({ command: 'run', seed: TINY_SEED, shard: { index: i + 1, count: 3 }, plan: { jobs: TINY_JOBS }, jobs: 3 });
      // A slice summarised alone would pass for a study: shards write no summary.
      expect(exists(join(base, name, 'summary.json'))).toBe(false);
      expect(readJson(join(base, name, 'run-info.json'))).toMatchObject({ workers: 1, jobsRun: 3 });
    }
  });

  it('refuses a malformed --shard', () => {
    for (const bad of ['4/3', '0/3', 'two/3']) refuses(['run', TINY, '--shard', bad, '--out', join(tempDir(), 'x')], /--shard/);
  });
});

describe('merge', () => {
  it('gives the same jobs, summary.json, CSV files and report.html as the single-machine run', () => {
    const r = asSlurm(join(base, 'slurm', 'merge.sbatch'));
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('Merged 3 shards (9 jobs)');
    for (const f of ['summary.json', 'fits.csv', 'parameters.csv', 'confusion.csv', 'inversion.csv', 'report.html']) expect(readText(join(base, f)), f).toBe(readText(join(ref, f)));
    expect(readdirSync(join(base, 'figures')).sort()).toEqual(readdirSync(join(ref, 'figures')).sort());
    expect(sortedJobs(base)).toBe(sortedJobs(ref));
    const keys = jobLines(base).map((l) => JSON.parse(l).key as string);
    expect(keys).toEqual([...keys].sort(compareJobKeys));
    expect(readJson(join(base, 'scenario.json'))).toEqual(readJson(join(ref, 'scenario.json')));
    expect(readJson(join(base, 'merge.json'))).toMatchObject({ command: 'run', seed: TINY_SEED, shards: 3, jobs: TINY_JOBS, failedJobs: 0, nextRound: { needed: false } });
  });

  it('accepts the run folder that holds the shards, and merging again gives the same folder', () => {
    const out = join(tempDir(), 'again');
    for (let i = 0; i < 2; i++) {
      const r = lossprobe(['merge', base, '--out', out, '--json']);
      expect(r.status, r.stderr).toBe(0);
      expect(JSON.parse(r.stdout)).toEqual(readJson(join(ref, 'summary.json')));
      expect(readText(join(out, 'summary.json'))).toBe(readText(join(ref, 'summary.json')));
    }
  });

  it('reports a missing shard by number and writes nothing', () => {
    const out = join(tempDir(), 'missing');
    const msg = refuses(['merge', join(base, SHARDS[0]), join(base, SHARDS[2]), '--out', out], /shard 2 of 3 is missing \(no folder given; 3 jobs\)/, out);
    expect(msg).toContain('--shard 2/3 --resume');
    expect(msg).toContain('sbatch --array=2');
  });

  it('names the jobs an unfinished shard lacks; after --resume of that shard the merge equals the single run', () => {
    const other = join(tempDir(), 'partial');
    for (const s of SHARDS) copyRun(join(base, s), join(other, s));
    const lines = jobLines(join(other, SHARDS[1]));
    // A task killed after one job (the last line torn mid-write).
    writeFileSync(join(other, SHARDS[1], 'jobs.jsonl'), lines[0] + '\n' + lines[1].slice(0, 40));
    const out = join(tempDir(), 'partial-merged');
    const msg = refuses(['merge', ...SHARDS.map((s) => join(other, s)), '--out', out], /shard 2 of 3 \(.*shard-002-of-003\) lacks 2 of its 3 jobs/, out);
    for (const l of lines.slice(1)) expect(msg).toContain(JSON.parse(l).key);
    const resumed = runTiny(other, ['--shard', '2/3', '--resume', '--workers', '1']);
    expect(resumed.status, resumed.stderr).toBe(0);
    expect(readJson(join(other, SHARDS[1], 'run-info.json'))).toMatchObject({ jobsRun: 2, jobsResumed: 1 });
    const ok = lossprobe(['merge', ...SHARDS.map((s) => join(other, s)), '--out', out]);
    expect(ok.status, ok.stderr).toBe(0);
    expect(readText(join(out, 'summary.json'))).toBe(readText(join(ref, 'summary.json')));
  });

  it('refuses shards of a different seed or different settings, naming them', () => {
    const odd = join(tempDir(), 'odd');
    expect(runTiny(odd, ['--shard', '2/3', '--seed', '7', '--workers', '1']).status).toBe(0);
    const out = join(tempDir(), 'never');
    refuses(['merge', join(base, SHARDS[0]), join(odd, SHARDS[1]), join(base, SHARDS[2]), '--out', out], new RegExp(`different seeds: seed ${TINY_SEED} \\(.*\\); seed 7 \\(.*odd/shard-002-of-003\\)`), out);
    const fewer = join(tempDir(), 'fewer');
    expect(runTiny(fewer, ['--shard', '2/3', '--observers', '2', '--workers', '1']).status).toBe(0);
    refuses(['merge', join(base, SHARDS[0]), join(fewer, SHARDS[1]), join(base, SHARDS[2]), '--out', out], /different scenarios or settings/, out);
  });

  it('detects duplicated jobs and shards given twice', () => {
    const out = join(tempDir(), 'never');
    refuses(['merge', ...SHARDS.map((s) => join(base, s)), join(base, SHARDS[0]), '--out', out], /shard 1 of 3 is given 2 times/, out);
    const dup = join(tempDir(), 'dup');
    for (const s of SHARDS) copyRun(join(base, s), join(dup, s));
    const line = jobLines(join(dup, SHARDS[0]))[0];
    appendFileSync(join(dup, SHARDS[0], 'jobs.jsonl'), line + '\n');
    refuses(['merge', dup, '--out', out], new RegExp(`1 job appears more than once: ${JSON.parse(line).key.replace(/[/.]/g, '\\$&')} \\(2×`), out);
  });

  it('refuses folders that are not shards and an --out that holds something else', () => {
    const out = join(tempDir(), 'never');
    refuses(['merge', ref, '--out', out], /is not a shard folder: it has no shard.json/, out);
    refuses(['merge', join(tempDir(), 'nowhere'), '--out', out], /no such folder/, out);
    refuses(['merge', ...SHARDS.map((s) => join(base, s)), '--out', join(base, SHARDS[0])], /is one of the shard folders/);
    const foreign = join(tempDir(), 'foreign');
    expect(runTiny(foreign, ['--observers', '1', '--workers', '1']).status).toBe(0);
    refuses(['merge', base, '--out', foreign], /already holds a run of another scenario/);
  });
});
