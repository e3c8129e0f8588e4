/**
 * The trial-count sweep on a "cluster", round by round, with the built CLI and
 * no scheduler: round 1's array script (from `cluster --size`) run by bash as
 * Slurm would start each task, its merge script, then the next rounds from
 * the plan files merge writes (round 2 through `cluster --round-plan`'s
 * scripts, round 3 through `size --round-plan … --shard K/N` typed by hand).
 * The final folder must equal a single-machine `size` with the same seed and
 * settings, summary.json byte for byte; merge must refuse rounds out of order,
 * mixed rounds, a plan that is not the one the lines call for, and a missing
 * shard, naming it by number. Uses test/fixtures/sizing-study.yaml (a
 * closed-form design with a variant; fits take milliseconds), tiny sizes.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { cpSync, readdirSync, renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { exists, lossprobe, readJson, readText, removeTemp, ROOT, tempDir } from './helpers/studyFixture.js';
import { roundJobs, type RoundPlan } from '../src/engine/sizeRounds.js';
import { planDigest } from '../src/engine/shardFolder.js';

const FIXTURE = join(ROOT, 'test', 'fixtures', 'sizing-study.yaml');
/** Two observers a point to start, two more a round, at most six (up to three rounds); a parameter target beside the model target. */
const SETTINGS = ['--trials', '20,40,80', '--observers', '2', '--batch', '2', '--max-observers', '6', '--parameter', 'noise.standard.sd', '--width', '2.5'];
const NO_STACK = /\n\s+at /;

let tmp: string;
/** The sweep's run folder; the single-machine sweep ran here first and was moved to `single`. */
let out: string;
let single: string;
/** Copies of the run folder after round 1 and after round 2 were merged, to tamper with. */
let afterRound1: string;
let afterRound2: string;
const merges: string[] = [];

function ok(args: string[]) {
  const r = lossprobe(args);
  if (r.status !== 0) throw new Error(`lossprobe ${args.join(' ')} failed (${r.status}):\n${r.stderr}`);
  return r;
}

/** Run a generated Slurm script with bash as Slurm would start it, minus Slurm. */
function asSlurm(script: string, env: Record<string, string> = {}) {
  const clean: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!k.startsWith('SLURM_') && !k.startsWith('LOSSPROBE_')) clean[k] = v;
  const r = spawnSync('bash', [script], { encoding: 'utf8', env: { ...clean, ...env }, timeout: 180_000 });
  if (r.status !== 0) throw new Error(`${script} failed (${r.status}):\n${r.stderr}`);
  return r;
}

beforeAll(() => {
  tmp = tempDir();
  out = join(tmp, 'sweep');
  single = join(tmp, 'single');
  ok(['size', FIXTURE, ...SETTINGS, '--out', out, '--workers', '1', '--quiet']);
  renameSync(out, single);
  // Round 1: the scripts of `cluster --size`, each array task run as Slurm would, then the merge script.
  ok(['cluster', FIXTURE, '--size', ...SETTINGS, '--shards', '2', '--cpus', '1', '--out', out]);
  for (const k of [1, 2]) asSlurm(join(out, 'round-1', 'slurm', 'array.sbatch'), { SLURM_ARRAY_TASK_ID: String(k), SLURM_CPUS_PER_TASK: '1' });
  merges.push(asSlurm(join(out, 'round-1', 'slurm', 'merge.sbatch')).stdout);
  afterRound1 = join(tmp, 'after-round-1');
  cpSync(out, afterRound1, { recursive: true });
  // Round 2: the scripts `cluster --round-plan` writes for the plan merge left in round-2/.
  ok(['cluster', FIXTURE, '--round-plan', join(out, 'round-2', 'plan.json'), '--shards', '3', '--cpus', '1']);
  for (const k of [1, 2, 3]) asSlurm(join(out, 'round-2', 'slurm', 'array.sbatch'), { SLURM_ARRAY_TASK_ID: String(k), SLURM_CPUS_PER_TASK: '1' });
  merges.push(asSlurm(join(out, 'round-2', 'slurm', 'merge.sbatch')).stdout);
  afterRound2 = join(tmp, 'after-round-2');
  cpSync(out, afterRound2, { recursive: true });
  // Round 3 by hand, as merge prints it.
  for (const k of [1, 2]) ok(['size', FIXTURE, '--round-plan', join(out, 'round-3', 'plan.json'), '--shard', `${k}/2`, '--out', out, '--workers', '1', '--quiet']);
  merges.push(ok(['merge', join(out, 'round-3'), '--out', out]).stdout);
});
afterAll(removeTemp);

function refuses(args: string[], pattern: RegExp) {
  const r = lossprobe(args);
  expect(r.status, r.stdout + r.stderr).toBe(2);
  expect(r.stderr).toMatch(pattern);
  expect(r.stderr).not.toMatch(NO_STACK);
  return r.stderr;
}

describe('size in rounds on a cluster', () => {
  it('ends with the same summary.json, byte for byte, as a single-machine size (base and variant)', () => {
    // Both sweeps ran with --out at the same path, so even the folder names inside summary.json agree.
    for (const sub of ['', join('variants', 'narrow')]) {
      expect(readText(join(out, sub, 'summary.json'))).toBe(readText(join(single, sub, 'summary.json')));
      for (const csv of ['sizing.csv', 'sizing-needed.csv', 'fits.csv', 'confusion.csv']) expect(readText(join(out, sub, csv)), `${sub}/${csv}`).toBe(readText(join(single, sub, csv)));
    }
    expect(readText(join(out, 'sizing-designs.csv'))).toBe(readText(join(single, 'sizing-designs.csv')));
    expect(readJson<{ sizing: { rule: { rounds: number } } }>(join(out, 'summary.json')).sizing.rule.rounds).toBe(3);
    expect(exists(join(out, 'report.html'))).toBe(true);
  });

  it('each merge says in plain words whether another round is needed, writes its plan and the commands to run it', () => {
    expect(merges[0]).toMatch(/Round 1 of the sweep 'sizing-study' is merged: 2 shards, 24 jobs/);
    expect(merges[0]).toMatch(/Another round is needed: \d+ points? still straddles? the target 0\.8/);
    expect(merges[0]).toContain(`lossprobe size ${FIXTURE} --round-plan ${join(out, 'round-2', 'plan.json')} --shard K/2 --out ${out} --resume`);
    expect(merges[0]).toContain(`lossprobe merge ${join(out, 'round-2')} --out ${out}`);
    expect(merges[0]).toContain(`lossprobe cluster ${FIXTURE} --round-plan ${join(out, 'round-2', 'plan.json')} --shards 2 --out ${out}`);
    expect(merges[1]).toMatch(/now holds rounds 1–2/);
    expect(merges[2]).toMatch(/No further round is needed/);
    expect(merges[2]).toMatch(/The folder is final/);
    // Until the last round, summary.json and the report say the numbers are provisional; the final folder does not (it equals the single-machine one).
    expect(readJson<any>(join(afterRound1, 'summary.json')).sizing.provisional).toMatch(/^Provisional: .* holds round 1 only; round 2 \(plan .*round-2\/plan\.json\) is still to run/);
    const provisionalReport = readText(join(afterRound1, 'variants', 'narrow', 'report.html'));
    expect(provisionalReport).toContain('Provisional: this sweep runs in rounds');
    // ... and says it above the headline too, before the first number a reader might cite.
    const glance = provisionalReport.indexOf('id="glance"');
    expect(glance).toBeGreaterThan(0);
    expect(provisionalReport.indexOf('Provisional: this sweep runs in rounds', glance)).toBeLessThan(provisionalReport.indexOf('class="headline"', glance));
    expect(readText(join(out, 'report.html'))).not.toContain('Provisional:');
    expect(readJson<any>(join(out, 'summary.json')).sizing.provisional).toBeUndefined();
    const plan = readJson<{ round: number; jobs: number; points: { from: number; to: number }[]; settings: { max: number } }>(join(out, 'round-2', 'plan.json'));
    expect(plan.round).toBe(2);
    expect(plan.points.every((p) => p.from === 2 && p.to === 4)).toBe(true);
    expect(plan.jobs).toBe(2 * plan.points.length);
    expect(exists(join(out, 'round-4'))).toBe(false);
    const merge = readJson<{ round: number; nextRound: { needed: boolean } }>(join(out, 'merge.json'));
    expect(merge.round).toBe(3);
    expect(merge.nextRound.needed).toBe(false);
    const shard = readJson<{ round: number; command: string }>(join(out, 'round-2', 'shard-001-of-003', 'shard.json'));
    expect(shard).toMatchObject({ command: 'size', round: 2 });
  });

  it('refuses shards of different rounds in one merge', () => {
    const target = join(tmp, 'mixed');
    const err = refuses(['merge', join(afterRound2, 'round-1', 'shard-001-of-002'), join(afterRound2, 'round-2', 'shard-002-of-003'), '--out', target], /shards of different rounds: round 1 \(.*\); round 2/);
    expect(err).toMatch(/one round of a sweep at a time/);
    expect(exists(target)).toBe(false);
  });

  it('refuses rounds out of order and a round merged twice', () => {
    const fresh = join(tmp, 'fresh');
    refuses(['merge', join(afterRound2, 'round-2'), '--out', fresh], /holds no round yet of this sweep, so the round to merge next is round 1, not round 2/);
    expect(exists(fresh)).toBe(false);
    refuses(['merge', join(afterRound2, 'round-1'), '--out', afterRound2], /already holds rounds 1–2 of this sweep \(merged, or run on one machine\), so round 1's lines are in it; the next round to run and merge is round 3/);
    refuses(['merge', join(out, 'round-3'), '--out', afterRound1], /holds round 1 of this sweep, so the round to merge next is round 2, not round 3/);
    // The last merged round may be merged again (say after its report was lost): the same folder comes out.
    const again = join(tmp, 'again');
    cpSync(afterRound2, again, { recursive: true });
    // The copy's summary names the folder it was merged into; the merge again names the copy.
    const before = readText(join(again, 'summary.json')).replaceAll(out, again);
    ok(['merge', join(again, 'round-2'), '--out', again]);
    expect(readText(join(again, 'summary.json'))).toBe(before);
  });

  it('refuses a round plan that is not the one the merged lines call for', () => {
    const copy = join(tmp, 'edited');
    cpSync(afterRound1, copy, { recursive: true });
    const path = join(copy, 'round-2', 'plan.json');
    const plan = readJson<Record<string, any>>(path);
    // A consistent but foreign plan: one point fewer, with its digest recomputed.
    plan.points = plan.points.slice(1);
    const keys = roundJobs({ round: 2, points: plan.points } as RoundPlan).map((j) => j.key);
    plan.jobs = keys.length;
    plan.digest = planDigest(keys);
    writeFileSync(path, JSON.stringify(plan));
    ok(['size', FIXTURE, '--round-plan', path, '--shard', '1/1', '--workers', '1', '--quiet']);
    refuses(['merge', join(copy, 'round-2'), '--out', copy], /the shards ran a plan for round 2 \(\d+ jobs\) that differs from the round 2 the lines in .* call for/);
  });

  it('names a missing shard of a round by number, with the command that runs it', () => {
    const err = refuses(['merge', join(afterRound2, 'round-2', 'shard-001-of-003'), join(afterRound2, 'round-2', 'shard-003-of-003'), '--out', afterRound1], /shard 2 of 3 is missing/);
    expect(err).toContain(`--round-plan ${join(afterRound1, 'round-2', 'plan.json')} --shard 2/3`);
  });

  it('a sweep merged up to round 1 on the cluster can be finished on one machine with size --resume: same result', () => {
    const laptop = join(tmp, 'laptop');
    cpSync(afterRound1, laptop, { recursive: true });
    ok(['size', FIXTURE, ...SETTINGS, '--out', laptop, '--resume', '--workers', '1', '--quiet']);
    for (const sub of ['', join('variants', 'narrow')]) expect(readText(join(laptop, sub, 'summary.json')).replaceAll(laptop, out)).toBe(readText(join(single, sub, 'summary.json')));
  });

  it('a shard killed midway resumes with --resume, and the round merges as if nothing happened (any split)', () => {
    const killed = join(tmp, 'killed');
    cpSync(afterRound1, killed, { recursive: true });
    const args = ['size', FIXTURE, '--round-plan', join(killed, 'round-2', 'plan.json'), '--shard', '1/1', '--workers', '1', '--quiet'];
    expect(lossprobe(args, { LOSSPROBE_EXIT_AFTER: '3' }).status).toBe(137);
    refuses(['merge', join(killed, 'round-2'), '--out', killed], /shard 1 of 1 \(.*\) lacks \d+ of its \d+ jobs/);
    ok([...args, '--resume']);
    ok(['merge', join(killed, 'round-2'), '--out', killed]);
    expect(readText(join(killed, 'summary.json'))).toBe(readText(join(afterRound2, 'summary.json')).replaceAll(out, killed));
  });

  it('points a merge of the whole run folder to the round to merge', () => {
    refuses(['merge', afterRound2, '--out', afterRound2], new RegExp(`run folder of a trial-count sweep run in rounds \\(round-1, round-2, round-3\\); merge one round at a time, the round just run: lossprobe merge ${join(afterRound2, 'round-3')}`));
  });

  it('cluster --follow writes a merge job that submits the next round itself, once; a small later round gets fewer shards', () => {
    const follow = join(tmp, 'follow');
    ok(['cluster', FIXTURE, '--size', ...SETTINGS, '--follow', '--shards', '2', '--partition', 'short', '--out', follow]);
    const merge = readText(join(follow, 'round-1', 'slurm', 'merge.sbatch'));
    expect(merge).toContain(`next=${join(follow, 'round-2')}\n`);
    expect(merge).toContain('if [ -f "$next/plan.json" ] && [ ! -e "$next/slurm" ]; then');
    expect(merge).toContain(`cluster ${FIXTURE} --round-plan "$next/plan.json" --shards 2 --cpus 4 --time 02:00:00 --partition short --out ${follow} --follow`);
    expect(merge).toContain('exec bash "$next/slurm/submit.sh"');
    expect(spawnSync('bash', ['-n', join(follow, 'round-1', 'slurm', 'merge.sbatch')]).status).toBe(0);
    refuses(['cluster', FIXTURE, '--follow', '--shards', '2', '--out', join(tmp, 'never')], /--follow chains the rounds of a trial-count sweep; add --size/);
    const small = join(tmp, 'small');
    const r = ok(['cluster', FIXTURE, '--round-plan', join(afterRound2, 'round-3', 'plan.json'), '--shards', '500', '--out', small]);
    const jobs = readJson<{ jobs: number }>(join(afterRound2, 'round-3', 'plan.json')).jobs;
    expect(r.stdout).toContain(`Round 3 has only ${jobs} jobs: ${jobs} shards instead of 500.`);
    expect(readText(join(small, 'round-3', 'slurm', 'array.sbatch'))).toContain(`#SBATCH --array=1-${jobs}\n`);
  });

  it('checks --round-plan: needs --shard, fixes the settings, and belongs to one sweep', () => {
    const plan = join(afterRound1, 'round-2', 'plan.json');
    refuses(['size', FIXTURE, '--round-plan', plan], /add --shard K\/N/);
    refuses(['size', FIXTURE, '--round-plan', plan, '--shard', '1/2', '--trials', '20,40'], /fixes the sweep's settings as round 1 ran them; drop --trials/);
    const edited = join(tmp, 'edited-scenario.yaml');
    writeFileSync(edited, readText(FIXTURE).replace('seed: 515', 'seed: 516'));
    refuses(['size', edited, '--round-plan', plan, '--shard', '1/2'], /belongs to another sweep/);
    refuses(['cluster', FIXTURE, '--max-observers', '8', '--shards', '2'], /belongs to a trial-count sweep; add --size/);
    expect(readdirSync(join(afterRound1, 'round-2'))).toEqual(['plan.json']);
  });
});
