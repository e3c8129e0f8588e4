/**
 * Shards of a trial-count sweep's rounds, and joining one round into the
 * sweep's run folder. A round's plan spans every design (base and variants),
 * so a shard folder holds one sub-folder per design:
 *
 *   <run folder>/round-<R>/shard-003-of-008/
 *     shard.json      command 'size', the round, the round plan's digest (engine/shardFolder.ts)
 *     size.json       the sweep: settings, designs, hash (engine/sweepRecord.ts)
 *     scenario.json   the base scenario under the sweep hash (what merge checks first)
 *     designs/<variant>/{scenario.json, jobs.jsonl}   each design's slice, an ordinary run folder
 *
 * Joining round R: the run folder must hold exactly rounds 1..R−1 (checked by
 * replaying the rule on its lines: the round it asks for next must be the
 * shards' plan, digest for digest), the shards must hold that plan once
 * (engine/mergeShards.ts), and the replay of the joined lines then says
 * whether a round R+1 is needed. Nothing here writes.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { UserError } from '../cli/userError.js';
import { validate } from '../scenario/load.js';
import { scenarioSchema } from '../scenario/schema.js';
import { folderLines } from './adaptiveSweep.js';
import { joinShardLines, type ShardFolder } from './mergeShards.js';
import { resolveStudy } from './resolve.js';
import { planDigest } from './shardFolder.js';
import { replayRounds, roundJobs, roundKey, splitRoundKey, sweepHash, type Replay, type RoundPlan, type SweepDesign } from './sizeRounds.js';
import { readSweepRecord, SWEEP_FILE, type SweepRecord } from './sweepRecord.js';

/** A design's folder inside a shard folder. */
export const designFolderInShard = (shardFolder: string, variant: string) => join(shardFolder, 'designs', variant);

/** A design's folder inside a sweep's run folder: the base design at the top, variants under variants/<name>, as `size` writes them. */
export const designFolderInRun = (root: string, variant: string) => (variant === 'base' ? root : join(root, 'variants', variant));

/** The sweep a shard belongs to, rebuilt from its size.json and its designs' resolved scenarios (their hashes must come out the same). */
export function sweepOfShard(s: ShardFolder): { record: SweepRecord; designs: SweepDesign[] } {
  const record = readSweepRecord(s.folder);
  if (!record) throw new UserError(`${s.folder} is a shard of 'size' but has no ${SWEEP_FILE}; rerun that shard`);
  if (record.sweepHash !== s.record.scenarioHash) throw new UserError(`${s.folder}: ${SWEEP_FILE} and shard.json name different sweeps (edited by hand?); rerun that shard`);
  const designs = record.designs.map(({ variant, hash }) => {
    const source = join(designFolderInShard(s.folder, variant), 'scenario.json');
    let saved: { scenario?: unknown };
    try {
      saved = JSON.parse(readFileSync(source, 'utf8')) as { scenario?: unknown };
    } catch (e) {
      throw new UserError(`${source}: cannot read the design's resolved scenario (${(e as Error).message}); rerun that shard`);
    }
    const study = resolveStudy(validate(scenarioSchema, saved.scenario, source), source);
    if (study.hash !== hash) throw new UserError(`${source}: the resolved scenario no longer gives the hash it was recorded with (written by another lossprobe version?); merge with the version that ran the shards`);
    return { variant, study };
  });
  if (sweepHash(designs, record.settings) !== record.sweepHash)
    throw new UserError(`${s.folder}: the sweep's settings and designs no longer give its recorded hash (written by another lossprobe version?); merge with the version that ran the shards`);
  return { record, designs };
}

export interface JoinedRound {
  round: number;
  /** The rule replayed on the run folder's lines before this round was added. */
  before: Replay;
  /** The rule replayed after: its `lines` are the merged folder's, its `next` the round after this one. */
  after: Replay;
  /** Lines this round added. */
  jobs: number;
  failed: number;
}

function roundsText(done: number): string {
  return done === 0 ? 'no round yet' : done === 1 ? 'round 1' : `rounds 1–${done}`;
}

/**
 * Check the shards of one round against the sweep's run folder `out` and join
 * them. `resumeHint(k)` words how to finish shard k.
 */
export function joinSizeRound(shards: readonly ShardFolder[], designs: readonly SweepDesign[], record: SweepRecord, out: string, resumeHint: (k: number) => string): JoinedRound {
  const first = shards[0].record;
  const round = first.round ?? 1;
  const inRun = readSweepRecord(out);
  const priorLines = (d: string) => folderLines(designFolderInRun(out, d));
  if (inRun === null && designs.some((d) => priorLines(d.variant).length))
    throw new UserError(`--out ${out} already holds job lines but no ${SWEEP_FILE}: it is not the run folder of this sweep; choose the folder the rounds were merged into (or a new one for round 1)`);
  if (inRun !== null && inRun.sweepHash !== record.sweepHash)
    throw new UserError(`--out ${out} holds another sweep (its ${SWEEP_FILE} records different settings or scenarios); merge each sweep into its own folder`);
  const before = replayRounds(designs, record.settings, priorLines);
  const done = before.done.length;
  const digestOf = (r: RoundPlan) => planDigest(roundJobs(r).map((j) => j.key));
  let keep: (d: string, l: JobLine) => boolean = () => true;
  if (before.next && before.next.round === round) {
    if (digestOf(before.next) !== first.plan.digest)
      throw new UserError(
        `merge refuses: the shards ran a plan for round ${round} (${first.plan.jobs} jobs) that differs from the round ${round} the lines in ${out} call for (${roundJobs(before.next).length} jobs). Run round ${round} with the plan file that merging round ${round - 1} into ${out} wrote (${join(out, `round-${round}`, 'plan.json')}).`,
      );
  } else if (round === done && digestOf(before.done[done - 1]) === first.plan.digest) {
    // Merging the last round again (e.g. after its report was lost): its lines are replaced by the shards'.
    const again = new Set(roundJobs(before.done[done - 1]).map((j) => j.key));
    keep = (d, l) => !again.has(roundKey(d, l.key));
  } else if (round <= done) {
    throw new UserError(`merge refuses: ${out} already holds ${roundsText(done)} of this sweep (merged, or run on one machine), so round ${round}'s lines are in it${before.next ? `; the next round to run and merge is round ${before.next.round}` : ' and the sweep is finished'}.`);
  } else if (!before.next) {
    throw new UserError(`merge refuses: ${out} holds the finished sweep (${roundsText(done)}); the rule asks for no round ${round}. These shards belong to another run of the sweep.`);
  } else {
    throw new UserError(`merge refuses: ${out} holds ${roundsText(done)} of this sweep, so the round to merge next is round ${before.next.round}, not round ${round}. Merge the rounds in order${done === 0 ? ', starting with round 1 (size --shard K/N without --round-plan)' : ''}.`);
  }
  const planKeys = roundJobs(round === done ? before.done[done - 1] : before.next!).map((j) => j.key);
  const qualified = shards.map((s) => ({
    ...s,
    lines: designs.flatMap((d) => folderLines(designFolderInShard(s.folder, d.variant)).map((l) => ({ ...l, key: roundKey(d.variant, l.key) }))),
  }));
  const joined = joinShardLines(qualified, planKeys, resumeHint);
  const added = new Map<string, JobLine[]>(designs.map((d) => [d.variant, []]));
  for (const l of joined) {
    const { design, key } = splitRoundKey(l.key);
    added.get(design)!.push({ ...l, key });
  }
  const after = replayRounds(designs, record.settings, (d) => [...before.lines.get(d)!.filter((l) => keep(d, l)), ...added.get(d)!]);
  if (after.done.length !== round) throw new Error(`round ${round} joined, but the replay finds ${after.done.length} finished rounds`);
  return { round, before, after, jobs: joined.length, failed: joined.filter((l) => l.status !== 'ok').length };
}
