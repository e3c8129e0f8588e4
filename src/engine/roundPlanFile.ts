/**
 * The plan file of one round of a sharded trial-count sweep, written by
 * `merge` into the round's own folder (`<run folder>/round-<R>/plan.json`)
 * when the rule asks for another round, and read by `size --round-plan FILE
 * --shard K/N` and `cluster --round-plan FILE`. It lives in the round's
 * folder, never overwritten by a later round, so a task of round R that is
 * resubmitted after round R was merged still runs round R's plan.
 *
 * The file names the sweep (its hash covers the scenario, every design and
 * the settings), carries the settings so later rounds need no flags repeated,
 * and lists the points that get observers with a digest of the plan's keys,
 * so an edited or foreign file is refused rather than run.
 */
import { mkdirSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { z } from 'zod';
import { UserError } from '../cli/userError.js';
import { readJsonRecord } from './jsonRecord.js';
import { writeFileAtomically } from './atomicFile.js';
import { planDigest } from './shardFolder.js';
import { roundJobs, sweepSettingsSchema, type RoundPlan, type SweepSettings } from './sizeRounds.js';

const hex64 = z.string().regex(/^[0-9a-f]{64}$/, 'a sha256 in hex');

export const roundPlanFileSchema = z
  .object({
    version: z.literal(1),
    command: z.literal('size'),
    name: z.string(),
    /** The scenario file round 1 ran from (for the commands printed); the hash, not the path, decides. */
    scenarioFile: z.string(),
    sweepHash: hex64,
    settings: sweepSettingsSchema,
    round: z.number().int().min(2),
    jobs: z.number().int().min(1),
    digest: hex64,
    points: z
      .array(z.object({ design: z.string().min(1), generating: z.string().min(1), trials: z.number().int().min(1), from: z.number().int().min(0), to: z.number().int().min(1) }).strict())
      .min(1),
  })
  .strict();

export type RoundPlanFile = z.infer<typeof roundPlanFileSchema>;

/** The folder of round R inside a sweep's run folder; its shards and its plan file go there. */
export function roundFolder(root: string, round: number): string {
  return join(root, `round-${round}`);
}

/** The sweep's run folder a plan file sits in (<run folder>/round-R/plan.json), or null when it was moved elsewhere. */
export function runFolderOfPlan(path: string): string | null {
  const round = dirname(resolve(path));
  return /^round-\d+$/.test(basename(round)) ? dirname(round) : null;
}

export const roundPlanPath = (root: string, round: number) => join(roundFolder(root, round), 'plan.json');

export function writeRoundPlan(root: string, o: { name: string; scenarioFile: string; sweepHash: string; settings: SweepSettings; plan: RoundPlan }): string {
  const keys = roundJobs(o.plan).map((j) => j.key);
  const file: RoundPlanFile = {
    version: 1,
    command: 'size',
    name: o.name,
    scenarioFile: o.scenarioFile,
    sweepHash: o.sweepHash,
    settings: o.settings,
    round: o.plan.round,
    jobs: keys.length,
    digest: planDigest(keys),
    points: o.plan.points,
  };
  const path = roundPlanPath(root, o.plan.round);
  mkdirSync(roundFolder(root, o.plan.round), { recursive: true });
  writeFileAtomically(path, JSON.stringify(file, null, 2) + '\n');
  return path;
}

/** Read and check a round plan file; the plan it holds, ready to shard. */
export function readRoundPlan(path: string): { file: RoundPlanFile; plan: RoundPlan } {
  const file = readJsonRecord(path, roundPlanFileSchema, '`lossprobe merge`');
  if (!file) throw new UserError(`--round-plan ${path}: no such file (merge writes a round's plan as <run folder>/round-<R>/plan.json when another round is needed)`);
  const plan: RoundPlan = { round: file.round, points: file.points };
  const bad = file.points.find((p) => !(p.to > p.from && p.to <= file.settings.max));
  const keys = bad ? [] : roundJobs(plan).map((j) => j.key);
  if (bad || keys.length !== file.jobs || planDigest(keys) !== file.digest)
    throw new UserError(`--round-plan ${path}: its points do not give the plan its digest records (edited by hand?); merge the previous round again to rewrite it`);
  return { file, plan };
}
