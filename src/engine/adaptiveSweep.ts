/**
 * Running the trial-count sweep's rounds (engine/sizeRounds.ts decides them).
 * `runRound` runs some jobs of a round, each in its design's folder, through
 * `runStudy` (a cluster shard runs its slice this way). `adaptiveSweep` is
 * the single-machine sweep: a loop that replays the rounds on the lines in
 * the folders, runs the next round, and repeats until the rule adds no
 * observers. Because it is a loop over the same fixed rounds a cluster runs
 * shard by shard, both end with the same lines and the same decisions; an
 * interrupted sweep resumes by the same replay.
 */
import { join } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { readJobLines } from './store.js';
import { runStudy } from './runStudy.js';
import { replayRounds, roundJobs, type Replay, type RoundJob, type SweepDesign, type SweepSettings } from './sizeRounds.js';

export { undecided } from './sizeRounds.js';

export interface RoundRunOutcome {
  interrupted: boolean;
  ran: number;
  failed: number;
}

/** Run these jobs of a round, each design's in `folderOf(design)` (finished keys are skipped, as on resume). */
export async function runRound(designs: readonly SweepDesign[], jobs: readonly RoundJob[], folderOf: (design: string) => string, o: { workers?: number; quiet?: boolean }): Promise<RoundRunOutcome> {
  let ran = 0;
  let failed = 0;
  for (const d of designs) {
    const mine = jobs.filter((j) => j.design === d.variant).map((j) => j.spec);
    if (!mine.length) continue;
    const out = await runStudy(d.study, { folder: folderOf(d.variant), workers: o.workers, quiet: o.quiet, jobs: mine });
    ran += out.ran;
    failed += out.failed;
    if (out.interrupted) return { interrupted: true, ran, failed };
  }
  return { interrupted: false, ran, failed };
}

/** Every line a design's folder holds. */
export function folderLines(folder: string): JobLine[] {
  return readJobLines(join(folder, 'jobs.jsonl')).lines;
}

export interface SweepOutcome extends RoundRunOutcome {
  /** The replay of the finished sweep (or of where it stopped, when interrupted). */
  replay: Replay;
}

export async function adaptiveSweep(
  designs: readonly SweepDesign[],
  settings: SweepSettings,
  folderOf: (design: string) => string,
  o: { workers?: number; quiet?: boolean; onRound?: (round: number, jobs: number) => void },
): Promise<SweepOutcome> {
  let ran = 0;
  let failed = 0;
  let last = 0;
  for (;;) {
    const replay = replayRounds(designs, settings, (d) => folderLines(folderOf(d)));
    if (!replay.next) return { replay, interrupted: false, ran, failed };
    // A round that ran to its end has a line for every job (failures included); anything else is a bug, not a loop.
    if (replay.next.round === last) throw new Error(`round ${last} of the sweep ended with jobs that have no line`);
    last = replay.next.round;
    const jobs = roundJobs(replay.next);
    o.onRound?.(replay.next.round, jobs.length);
    const out = await runRound(designs, jobs, folderOf, o);
    ran += out.ran;
    failed += out.failed;
    if (out.interrupted) return { replay, interrupted: true, ran, failed };
  }
}
