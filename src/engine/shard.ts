/**
 * Shards: disjoint slices of one job plan, for running a study as the tasks
 * of a cluster array job. The assignment is fixed and documented so that
 * every shard, on any machine, agrees on it without talking to the others:
 * sort the plan's job keys in the one tuple order (analysis/jobKeys.ts) and
 * deal them out round-robin, the i-th key (counting from 0) going to shard
 * (i mod N) + 1. Round-robin rather than contiguous blocks keeps every
 * shard's mix of generating models and trial counts, and so its run time,
 * about equal. Shards are numbered 1..N, as people count array tasks.
 */
import { compareJobKeys } from '../analysis/jobKeys.js';

export interface Shard {
  /** 1-based shard number. */
  index: number;
  count: number;
}

/** Parse "K/N" (1 ≤ K ≤ N ≤ 10000); returns a message instead of throwing so each command words its own error. */
export function parseShard(text: string): Shard | string {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) return `--shard expects K/N, shard K of N, e.g. 3/8 (got '${text}')`;
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (!(count >= 1 && count <= 10_000 && index >= 1 && index <= count))
    return `--shard K/N needs 1 ≤ K ≤ N ≤ 10000 (got '${text}')`;
  return { index, count };
}

/** The jobs of one shard, in key order. */
export function shardJobs<T extends { key: string }>(jobs: readonly T[], shard: Shard): T[] {
  const sorted = [...jobs].sort((a, b) => compareJobKeys(a.key, b.key));
  return sorted.filter((_, i) => i % shard.count === shard.index - 1);
}

/** The shard (1-based) a key belongs to within a plan, or 0 when the key is not in the plan. */
export function shardOfKey(planKeys: readonly string[], key: string, count: number): number {
  const sorted = [...planKeys].sort(compareJobKeys);
  const i = sorted.indexOf(key);
  return i < 0 ? 0 : (i % count) + 1;
}

/**
 * The folder of one shard inside a study's run folder, e.g. shard-003-of-008:
 * zero-padded (at least 3 digits) so the shards list in order and a shell glob
 * such as shard-*-of-008 picks exactly the shards of one split.
 */
export function shardFolderName(shard: Shard): string {
  const width = Math.max(3, String(shard.count).length);
  return `shard-${String(shard.index).padStart(width, '0')}-of-${String(shard.count).padStart(width, '0')}`;
}

/** A shell glob matching the folders of every shard of a split into `count` shards, e.g. shard-*-of-008. */
export function shardGlob(count: number): string {
  return shardFolderName({ index: count, count }).replace(/^shard-\d+-/, 'shard-*-');
}
