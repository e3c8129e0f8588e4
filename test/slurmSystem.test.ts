/**
 * The Slurm scripts of `lossprobe cluster` on a real scheduler: a single-node
 * cluster started for this test (test/helpers/slurmCluster.ts) runs the tiny
 * fixture study as a 4-task array job and the dependent merge job; the merged
 * summary.json must equal the single-machine run's (same seed) byte for byte;
 * and a trial-count sweep (`size`) runs as two rounds, each an array job and
 * its merge, the first merge job submitting the second round itself
 * (`cluster --follow`), ending with the single-machine sweep's summary.json.
 * Runs only where Slurm and munge are installed and the test runs as root
 * (CI: test/system/install-debian-packages.sh); skipped with the reason
 * otherwise.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { readdirSync, renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT, TINY, TINY_JOBS, exists, jobLines, lossprobe, readJson, readText, referenceRun, removeTemp, sortedJobs, tempDir } from './helpers/studyFixture.js';
import { slurmUnavailable, startSlurm, type SlurmCluster } from './helpers/slurmCluster.js';

const unavailable = slurmUnavailable();
if (unavailable) console.warn(`slurmSystem.test.ts skipped: ${unavailable}`);

describe.skipIf(unavailable !== null)(`the generated Slurm scripts on a real single-node scheduler${unavailable ? ` (skipped: ${unavailable})` : ''}`, () => {
  let cluster: SlurmCluster | null = null;
  /** The run folder of the first test, once its array and merge succeeded. */
  let done: string | null = null;
  beforeAll(async () => {
    referenceRun();
    cluster = await startSlurm(join(tempDir(), 'slurm'));
  });
  afterAll(async () => {
    try {
      await cluster?.stop();
    } finally {
      removeTemp();
    }
  });

  it('a 4-task array job and its dependent merge give the single-machine summary.json exactly', () => {
    const c = cluster!;
    const out = join(tempDir(), 'cluster-run');
    const gen = lossprobe(['cluster', TINY, '--shards', '4', '--cpus', '1', '--time', '10', '--partition', c.partition, '--out', out]);
    expect(gen.status, gen.stderr).toBe(0);
    const submit = join(out, 'slurm', 'submit.sh');
    expect(gen.stdout).toContain(`bash ${submit}`);
    // --wait blocks until the array ends, then until the merge ends; timeout guards a stuck scheduler.
    const r = spawnSync('timeout', ['150', 'bash', submit, '--wait'], { env: c.env, encoding: 'utf8' });
    expect(r.status, `submit.sh exit ${r.status}\n${r.stdout}\n${r.stderr}\n${c.logs()}\nlogs:\n${readdirSync(join(out, 'logs')).map((f) => readText(join(out, 'logs', f))).join('\n')}`).toBe(0);
    expect(r.stdout).toMatch(/Submitted the array job \d+ \(4 tasks\)/);
    expect(r.stdout).toMatch(/Submitted the merge job \d+/);

    const ref = referenceRun().folder;
    expect(readText(join(out, 'summary.json'))).toBe(readText(join(ref, 'summary.json')));
    expect(sortedJobs(out)).toBe(sortedJobs(ref));
    expect(readText(join(out, 'report.html'))).toBe(readText(join(ref, 'report.html')));
    const shards = readdirSync(out).filter((d) => d.startsWith('shard-')).sort();
    expect(shards).toEqual(['shard-001-of-004', 'shard-002-of-004', 'shard-003-of-004', 'shard-004-of-004']);
    // Each task used the one core it was given as its one worker.
    for (const s of shards) expect(readJson<{ workers: number }>(join(out, s, 'run-info.json')).workers).toBe(1);
    expect(readJson<{ jobs: number; shards: number }>(join(out, 'merge.json'))).toMatchObject({ jobs: TINY_JOBS, shards: 4 });
    expect(readText(join(out, 'logs', 'merge.log'))).toContain('Merged 4 shards (9 jobs)');
    done = out;
  }, 240_000);

  it('a failed array task resubmitted with sbatch --array=K resumes, and merging again gives the same summary', () => {
    expect(done, 'needs the run of the previous test').not.toBeNull();
    const c = cluster!;
    const out = done!;
    const shard = join(out, 'shard-002-of-004');
    const lines = jobLines(shard);
    expect(lines.length).toBeGreaterThan(1);
    // As if task 2 had been killed after its first job.
    writeFileSync(join(shard, 'jobs.jsonl'), lines[0] + '\n');
    const slurm = join(out, 'slurm');
    const task = spawnSync('timeout', ['90', 'sbatch', '--wait', '--array=2', join(slurm, 'array.sbatch')], { env: c.env, encoding: 'utf8' });
    expect(task.status, `${task.stdout}\n${task.stderr}\n${readText(join(out, 'logs', 'shard-2.log'))}`).toBe(0);
    expect(readJson(join(shard, 'run-info.json'))).toMatchObject({ jobsResumed: 1, jobsRun: lines.length - 1 });
    const merge = spawnSync('timeout', ['60', 'sbatch', '--wait', join(slurm, 'merge.sbatch')], { env: c.env, encoding: 'utf8' });
    expect(merge.status, `${merge.stdout}\n${merge.stderr}\n${readText(join(out, 'logs', 'merge.log'))}`).toBe(0);
    expect(readText(join(out, 'summary.json'))).toBe(readText(join(referenceRun().folder, 'summary.json')));
  }, 180_000);

  it('a trial-count sweep whose round-1 merge job submits round 2 itself (--follow) ends with the single-machine size summary.json exactly', async () => {
    const c = cluster!;
    const sizing = join(ROOT, 'test', 'fixtures', 'sizing-study.yaml');
    // Two observers a point, then two more where undecided, at most four: two rounds.
    const settings = ['--trials', '20,40', '--observers', '2', '--batch', '2', '--max-observers', '4'];
    const dir = tempDir();
    const out = join(dir, 'sweep');
    // The single-machine sweep runs at the same path first, so folder names inside summary.json agree too.
    expect(lossprobe(['size', sizing, ...settings, '--out', out, '--workers', '1', '--quiet']).status).toBe(0);
    renameSync(out, join(dir, 'single'));
    const gen = lossprobe(['cluster', sizing, '--size', ...settings, '--follow', '--shards', '2', '--cpus', '1', '--time', '10', '--partition', c.partition, '--out', out]);
    expect(gen.status, gen.stderr).toBe(0);
    const logs = () => ['round-1', 'round-2'].flatMap((r) => (exists(join(out, r, 'logs')) ? readdirSync(join(out, r, 'logs')).map((f) => `${r}/${f}:\n${readText(join(out, r, 'logs', f))}`) : [])).join('\n');
    // --wait blocks until round 1's array and merge end; that merge job has then submitted round 2.
    const r = spawnSync('timeout', ['150', 'bash', join(out, 'round-1', 'slurm', 'submit.sh'), '--wait'], { env: c.env, encoding: 'utf8' });
    expect(r.status, `submit.sh exit ${r.status}\n${r.stdout}\n${r.stderr}\n${c.logs()}\n${logs()}`).toBe(0);
    expect(readText(join(out, 'round-1', 'logs', 'merge.log'))).toMatch(/Another round is needed[\s\S]*Submitted the array job \d+/);
    const finished = () => exists(join(out, 'merge.json')) && readJson<{ round: number }>(join(out, 'merge.json')).round === 2;
    for (const end = Date.now() + 150_000; !finished() && Date.now() < end; ) await new Promise((ok) => setTimeout(ok, 1000));
    expect(finished(), `round 2 did not finish\n${c.logs()}\n${logs()}`).toBe(true);
    expect(readText(join(out, 'round-2', 'logs', 'merge.log'))).toMatch(/No further round is needed/);
    for (const sub of ['', join('variants', 'narrow')]) expect(readText(join(out, sub, 'summary.json'))).toBe(readText(join(dir, 'single', sub, 'summary.json')));
  }, 360_000);
});
