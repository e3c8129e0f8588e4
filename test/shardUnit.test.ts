/**
 * Shards without workers: the fixed assignment of job keys to shards
 * (src/engine/shard.ts), shard folder names, the checks merge makes on shard
 * folders (src/engine/mergeShards.ts) on made-up folders, and the text of the
 * Slurm scripts (src/cluster/slurmScripts.ts).
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { compareJobKeys } from '../src/analysis/jobKeys.js';
import type { JobLine } from '../src/analysis/types.js';
import { jobKey } from '../src/engine/plan.js';
import { parseShard, shardFolderName, shardJobs, shardOfKey } from '../src/engine/shard.js';
import { planDigest, type ShardRecord } from '../src/engine/shardFolder.js';
import { checkSameStudy, joinShardLines, type ShardFolder } from '../src/engine/mergeShards.js';
import { shellQuote, slurmScripts, type SlurmPlan } from '../src/cluster/slurmScripts.js';

const FC = { seed: 9090, numRuns: 200 };

describe('parseShard', () => {
  it('reads K/N and refuses what is not a shard of a split', () => {
    expect(parseShard('3/8')).toEqual({ index: 3, count: 8 });
    expect(parseShard(' 1 / 1 ')).toEqual({ index: 1, count: 1 });
    for (const bad of ['0/4', '5/4', '3', '3/0', 'a/b', '1/10001', '-1/4', '1.5/4']) expect(typeof parseShard(bad), bad).toBe('string');
    expect(parseShard('5/4')).toMatch(/1 ≤ K ≤ N/);
  });
});

describe('the assignment of jobs to shards', () => {
  const keysArb = fc.uniqueArray(fc.tuple(fc.constantFrom('squared', 'absolute', 'power'), fc.integer({ min: 0, max: 300 }), fc.constantFrom(60, 120, 240, 1000)), {
    minLength: 0,
    maxLength: 60,
    selector: (t) => t.join('/'),
  });

  it('deals the sorted keys round-robin: every job in exactly one shard, the i-th key in shard (i mod N) + 1', () => {
    fc.assert(
      fc.property(keysArb, fc.integer({ min: 1, max: 12 }), fc.integer(), (tuples, count, salt) => {
        const jobs = tuples.map(([g, o, t]) => ({ key: jobKey(g, o, t) }));
        // Input order must not matter: shuffle deterministically by the salt.
        const shuffled = [...jobs].sort((a, b) => ((a.key.length * 31 + salt) % 7) - ((b.key.length * 31 + salt) % 7));
        const sorted = jobs.map((j) => j.key).sort(compareJobKeys);
        const seen = new Map<string, number>();
        for (let k = 1; k <= count; k++) {
          const mine = shardJobs(shuffled, { index: k, count }).map((j) => j.key);
          expect(mine).toEqual(sorted.filter((_, i) => i % count === k - 1));
          // Sizes differ by at most one, so shards take about equally long.
          expect(Math.abs(mine.length - sorted.length / count)).toBeLessThan(1);
          for (const key of mine) {
            expect(seen.has(key)).toBe(false);
            seen.set(key, k);
            expect(shardOfKey(sorted, key, count)).toBe(k);
          }
        }
        expect(seen.size).toBe(jobs.length);
      }),
      FC,
    );
  });

  it('compares numbers as numbers: trials=240 before trials=1000, obs 0009 before 0010', () => {
    const jobs = [jobKey('a', 10, 60), jobKey('a', 9, 1000), jobKey('a', 9, 240)].map((key) => ({ key }));
    expect(shardJobs(jobs, { index: 1, count: 1 }).map((j) => j.key)).toEqual(['gen=a/obs=0009/trials=240', 'gen=a/obs=0009/trials=1000', 'gen=a/obs=0010/trials=60']);
    expect(shardJobs(jobs, { index: 2, count: 2 }).map((j) => j.key)).toEqual(['gen=a/obs=0009/trials=1000']);
  });

  it('names shard folders with zero-padded numbers that sort in order', () => {
    expect(shardFolderName({ index: 3, count: 8 })).toBe('shard-003-of-008');
    expect(shardFolderName({ index: 12, count: 1500 })).toBe('shard-0012-of-1500');
    const names = Array.from({ length: 12 }, (_, i) => shardFolderName({ index: i + 1, count: 12 }));
    expect([...names].sort()).toEqual(names);
  });

  it('digests a plan whatever the order of its keys, and tells plans apart', () => {
    const keys = [jobKey('a', 0, 60), jobKey('b', 1, 60), jobKey('a', 2, 60)];
    expect(planDigest(keys)).toBe(planDigest([...keys].reverse()));
    expect(planDigest(keys)).not.toBe(planDigest(keys.slice(1)));
  });
});

/** Made-up shard folders over a plan of 3 models × 4 observers (12 jobs) in 3 shards. */
const PLAN = ['squared', 'absolute', 'power'].flatMap((g) => [0, 1, 2, 3].map((o) => jobKey(g, o, 120)));
const SORTED = [...PLAN].sort(compareJobKeys);
const HASH = 'a'.repeat(64);
function record(index: number, over: Partial<ShardRecord> = {}): ShardRecord {
  return { version: 1, command: 'run', name: 'demo', scenarioHash: HASH, seed: 5, shard: { index, count: 3 }, plan: { jobs: 12, digest: planDigest(PLAN) }, jobs: 4, ...over };
}
const line = (key: string) => ({ key, status: 'ok' }) as unknown as JobLine;
function folder(index: number, keys = SORTED.filter((_, i) => i % 3 === index - 1), over: Partial<ShardRecord> = {}): ShardFolder {
  return { folder: `runs/shard-00${index}-of-003`, record: record(index, over), scenario: { hash: HASH, scenario: {} }, lines: keys.map(line) };
}
const hint = (k: number) => `rerun ${k}`;
const refusal = (f: () => unknown) => {
  try {
    f();
  } catch (e) {
    return (e as Error).message;
  }
  throw new Error('expected a refusal');
};

describe('merge checks on shard folders', () => {
  it('joins complete shards into the plan in key order', () => {
    const all = [folder(3), folder(1), folder(2)];
    checkSameStudy(all);
    expect(joinShardLines(all, PLAN, hint).map((l) => l.key)).toEqual(SORTED);
  });

  it('names a missing shard by number, with its jobs and how to rerun it', () => {
    const msg = refusal(() => joinShardLines([folder(1), folder(3)], PLAN, hint));
    expect(msg).toContain('shard 2 of 3 is missing (no folder given; 4 jobs)');
    for (const k of SORTED.filter((_, i) => i % 3 === 1)) expect(msg).toContain(k);
    expect(msg).toContain('rerun 2');
    expect(msg).not.toContain('shard 1 of 3');
  });

  it('names an unfinished shard, how many of its jobs are missing and which', () => {
    const mine = SORTED.filter((_, i) => i % 3 === 2);
    const msg = refusal(() => joinShardLines([folder(1), folder(2), folder(3, mine.slice(0, 1))], PLAN, hint));
    expect(msg).toContain('shard 3 of 3 (runs/shard-003-of-003) lacks 3 of its 4 jobs');
    for (const k of mine.slice(1)) expect(msg).toContain(k);
    expect(msg).not.toContain(mine[0] + ',');
  });

  it('detects duplicated jobs, jobs of other shards and jobs outside the plan', () => {
    const one = SORTED.filter((_, i) => i % 3 === 0);
    const dup = refusal(() => joinShardLines([folder(1, [...one, one[0]]), folder(2), folder(3)], PLAN, hint));
    expect(dup).toContain(`1 job appears more than once: ${one[0]} (2× in runs/shard-001-of-003)`);
    const misplaced = refusal(() => joinShardLines([folder(1), folder(2, [...SORTED.filter((_, i) => i % 3 === 1), one[1]]), folder(3)], PLAN, hint));
    expect(misplaced).toContain(`holds jobs of other shards: ${one[1]} (belongs to shard 1)`);
    expect(misplaced).toContain('more than once');
    const foreign = refusal(() => joinShardLines([folder(1, [...one, jobKey('squared', 99, 120)]), folder(2), folder(3)], PLAN, hint));
    expect(foreign).toContain("holds 1 job that the study's plan does not have: gen=squared/obs=0099/trials=120");
  });

  it('refuses shards of different seeds, scenarios, splits, plans or commands, naming the folders', () => {
    expect(refusal(() => checkSameStudy([folder(1), folder(2, undefined, { seed: 7 }), folder(3)]))).toMatch(
      /different seeds: seed 5 \(runs\/shard-001-of-003, runs\/shard-003-of-003\); seed 7 \(runs\/shard-002-of-003\)/,
    );
    expect(refusal(() => checkSameStudy([folder(1), folder(2, undefined, { scenarioHash: 'b'.repeat(64) })]))).toMatch(/different scenarios or settings: .*hash aaaaaaaaaaaa… \(runs\/shard-001-of-003\); .*hash bbbbbbbbbbbb…/);
    expect(refusal(() => checkSameStudy([folder(1), { ...folder(2), record: { ...record(2), shard: { index: 2, count: 4 } } }]))).toMatch(/different splits: 3 shards .*; 4 shards/);
    expect(refusal(() => checkSameStudy([folder(1), folder(2, undefined, { plan: { jobs: 9, digest: 'c'.repeat(64) } })]))).toMatch(/different plans/);
    expect(refusal(() => checkSameStudy([folder(1), folder(2, undefined, { command: 'size' })]))).toMatch(/different commands/);
    expect(refusal(() => checkSameStudy([folder(1), folder(1), folder(2)]))).toContain('shard 1 of 3 is given 2 times');
  });
});

describe('the Slurm scripts', () => {
  const plan: SlurmPlan = {
    toolVersion: '9.9.9',
    command: 'run',
    name: 'my study',
    scenarioHash: 'f'.repeat(64),
    seed: 3,
    jobs: 40,
    shards: 4,
    cpus: 2,
    time: '01:30:00',
    node: '/opt/node/bin/node',
    cli: "/home/o'brien/lossprobe/dist/cli/main.js",
    scenario: '/data/my study.yaml',
    studyFlags: ['--observers', '10'],
    out: '/data/results/my-study',
  };

  it('asks only for standard directives and takes shard and cores from Slurm environment variables', () => {
    const s = slurmScripts(plan);
    const array = s['array.sbatch'];
    for (const d of ['--array=1-4', '--cpus-per-task=2', '--ntasks=1', '--time=01:30:00', '--job-name=lp-my-study', '--output=/data/results/my-study/logs/shard-%a.log'])
      expect(array).toContain(`#SBATCH ${d}\n`);
    expect(array).not.toContain('--partition');
    expect(array).toContain('"${SLURM_ARRAY_TASK_ID:?');
    expect(array).toContain('workers="${SLURM_CPUS_PER_TASK:-1}"');
    expect(array).toContain(`exec "$node" "$cli" run '/data/my study.yaml' --observers 10 --shard "$shard/4" --out /data/results/my-study --workers "$workers" --resume\n`);
    expect(s['merge.sbatch']).toContain('exec "$node" "$cli" merge /data/results/my-study/shard-*-of-004 --out /data/results/my-study\n');
    expect(s['submit.sh']).toContain('--dependency=afterany:"$array_id"');
    const withPartition = slurmScripts({ ...plan, partition: 'short', account: 'lab42' });
    for (const f of ['array.sbatch', 'merge.sbatch'] as const) {
      expect(withPartition[f]).toContain('#SBATCH --partition=short\n');
      expect(withPartition[f]).toContain('#SBATCH --account=lab42\n');
    }
  });

  it('writes scripts bash accepts, with paths quoted for the shell', () => {
    expect(shellQuote('/plain/path-1.yaml')).toBe('/plain/path-1.yaml');
    expect(shellQuote("o'brien dir")).toBe(`'o'\\''brien dir'`);
    const dir = mkdtempSync(join(tmpdir(), 'lp-slurm-text-'));
    try {
      for (const [name, text] of Object.entries(slurmScripts(plan))) {
        writeFileSync(join(dir, name), text);
        const r = spawnSync('bash', ['-n', join(dir, name)], { encoding: 'utf8' });
        expect(r.status, `${name}: ${r.stderr}`).toBe(0);
      }
      // The quoted CLI path comes back intact from bash.
      const echo = spawnSync('bash', ['-c', `cli=\${LOSSPROBE_CLI:-${shellQuote(plan.cli)}}; printf %s "$cli"`], { encoding: 'utf8', env: { PATH: process.env.PATH } });
      expect(echo.stdout).toBe(plan.cli);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
