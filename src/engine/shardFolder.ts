/**
 * A shard's folder and its identity card, shard.json. Every command that runs
 * a fixed job plan (run now; the fixed parts of size, fit and plan) runs one
 * shard the same way: compute the full plan, call `openShard` to get the
 * shard's folder and its slice of the plan (src/engine/shard.ts fixes the
 * assignment), prepare the folder as usual (scenario.json, resume), then
 * `recordShard` before running. Merge reads shard.json to check that the
 * folders it joins are slices of one plan (same command, scenario hash, seed,
 * plan and shard count) and which slice each folder holds.
 */
import { createHash } from 'node:crypto';
import { join } from 'node:path';
import { z } from 'zod';
import { compareJobKeys } from '../analysis/jobKeys.js';
import { UserError } from '../cli/userError.js';
import { readJsonRecord } from './jsonRecord.js';
import { writeFileAtomically } from './atomicFile.js';
import { shardFolderName, shardGlob, shardJobs, type Shard } from './shard.js';

export const SHARD_FILE = 'shard.json';

export const shardRecordSchema = z
  .object({
    version: z.literal(1),
    /** The command whose plan was split, e.g. 'run'; merge finishes the folder as that command would. */
    command: z.string().min(1),
    name: z.string(),
    scenarioHash: z.string().regex(/^[0-9a-f]{64}$/, 'a sha256 in hex'),
    seed: z.number().int(),
    shard: z
      .object({ index: z.number().int().min(1), count: z.number().int().min(1).max(10_000) })
      .strict()
      .refine((s) => s.index <= s.count, 'shard index must lie in 1..count'),
    /**
     * The whole plan this shard is a slice of: its size and a digest of its
     * sorted keys. A round of adaptive sizing is a plan of its own, so shards of
     * different rounds never pass for one split.
     */
    plan: z.object({ jobs: z.number().int().min(0), digest: z.string().regex(/^[0-9a-f]{64}$/, 'a sha256 in hex') }).strict(),
    /** Jobs in this shard's slice. */
    jobs: z.number().int().min(0),
    /** The round of an adaptive sweep (size) whose plan this shard splits; absent for one-round commands. */
    round: z.number().int().min(1).optional(),
  })
  .strict();

export type ShardRecord = z.infer<typeof shardRecordSchema>;

/** sha256 of the plan's keys in the one key order, one per line. */
export function planDigest(keys: readonly string[]): string {
  return createHash('sha256').update([...keys].sort(compareJobKeys).join('\n')).digest('hex');
}

export interface ShardStart<T> {
  folder: string;
  jobs: T[];
  record: ShardRecord;
}

/** The folder (inside `base`) and slice of the plan of one shard, and the record to write there. */
export function openShard<T extends { key: string }>(o: {
  base: string;
  shard: Shard;
  command: string;
  name: string;
  scenarioHash: string;
  seed: number;
  plan: readonly T[];
}): ShardStart<T> {
  const jobs = shardJobs(o.plan, o.shard);
  return {
    folder: join(o.base, shardFolderName(o.shard)),
    jobs,
    record: {
      version: 1,
      command: o.command,
      name: o.name,
      scenarioHash: o.scenarioHash,
      seed: o.seed,
      shard: { index: o.shard.index, count: o.shard.count },
      plan: { jobs: o.plan.length, digest: planDigest(o.plan.map((j) => j.key)) },
      jobs: jobs.length,
    },
  };
}

/** shard.json of a folder: the record, or null when the folder has none. */
export function readShardRecord(folder: string): ShardRecord | null {
  return readJsonRecord(join(folder, SHARD_FILE), shardRecordSchema, '`lossprobe run --shard K/N`');
}

/** Write shard.json, or check that the one already there (a resumed shard) describes the same slice. */
export function recordShard(folder: string, record: ShardRecord): void {
  const prior = readShardRecord(folder);
  if (prior === null) {
    writeFileAtomically(join(folder, SHARD_FILE), JSON.stringify(record, null, 2) + '\n');
    return;
  }
  if (JSON.stringify(prior) !== JSON.stringify(record))
    throw new UserError(
      `${folder} holds shard ${prior.shard.index} of ${prior.shard.count} of another split or study (its ${SHARD_FILE} differs: command '${prior.command}', ${prior.plan.jobs} planned jobs, seed ${prior.seed}); resume it with the same scenario file and flags, or use another --out`,
    );
}

/** What to type once every shard of a split into `count` shards inside `base` has finished. */
export function mergeHint(base: string, count: number): string {
  return `lossprobe merge ${join(base, shardGlob(count))} --out ${base}`;
}
