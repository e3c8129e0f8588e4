/**
 * `lossprobe merge SHARD_FOLDERS... --out RUN_FOLDER`: joins the shard folders
 * of a study run as a cluster array job into one run folder with the same
 * scenario.json, jobs.jsonl (sorted by key), summary.json, CSV files and
 * report.html as a single-machine run of the same scenario and seed. Checks and refusals live
 * in engine/mergeShards.ts; what the merged folder holds is up to the command
 * whose plan was split (the table `mergers` below), so `size`, `fit` and
 * `plan` add one entry each.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { writeFileAtomically } from '../engine/atomicFile.js';
import { checkSameStudy, expandShardFolders, joinShardLines, readShardFolder, type ShardFolder } from '../engine/mergeShards.js';
import { planJobs } from '../engine/plan.js';
import { resolveStudy, type ResolvedStudy } from '../engine/resolve.js';
import { planDigest } from '../engine/shardFolder.js';
import { studySummary } from '../report/studyOutputs.js';
import { validate } from '../scenario/load.js';
import { scenarioSchema } from '../scenario/schema.js';
import type { ParticipantLine } from '../analysis/participantTypes.js';
import { participantKey } from '../engine/fitParticipant.js';
import { finishFit, readRecoveryStudy } from './fit.js';
import { readFitSettings, writeFitSettings } from './fitSettings.js';
import { openRunFolder, printStudy, writeReportOrWarn, writeStudyOutputs } from './run.js';
import { UserError } from './userError.js';
import { mergeSizeRound } from './sizeRound.js';

export interface MergeFlags {
  out: string;
  json?: boolean;
}

/**
 * Whether a study needs another round after this merge. Adaptive sizing on a
 * cluster runs in rounds, each a fixed plan split into shards; the merge of a
 * round decides whether another is needed and writes its plan. A recovery
 * study (`run`) is always one round.
 */
export interface NextRound {
  needed: boolean;
  reason: string;
  /** The next round's plan file, when one is needed. */
  plan?: string;
}

interface Merger {
  /**
   * A command whose shards are not one study's slice (size: a round of a sweep over several designs)
   * joins and finishes them itself, after the common checks of checkSameStudy.
   */
  mergeAll?(shards: readonly ShardFolder[], o: { out: string; json: boolean; toolVersion: string }): Promise<{ jobs: number; failed: number; round: number; next: NextRound }>;
  /** The study the shards ran (default: rebuilt from scenario.json, whose hash must be the recorded one). */
  studyOf?(s: ShardFolder): ResolvedStudy;
  /** The full job plan of the study, as the command builds it. */
  planKeys?(study: ResolvedStudy, first: ShardFolder): string[];
  /** Write the command's outputs into the merged folder and print them. */
  finish?(o: { folder: string; study: ResolvedStudy; lines: JobLine[]; toolVersion: string; json: boolean; first: ShardFolder }): Promise<NextRound>;
}

const mergers: Record<string, Merger> = {
  // A round of a trial-count sweep: joined into the sweep's run folder, which then says whether another round is needed.
  size: { mergeAll: mergeSizeRound },
  run: {
    planKeys: (study) => planJobs(study).map((j) => j.key),
    async finish({ folder, study, lines, toolVersion, json }) {
      const summary = studySummary(study, lines, toolVersion);
      writeStudyOutputs(folder, summary, lines);
      const report = await writeReportOrWarn(folder);
      if (json) process.stdout.write(JSON.stringify(summary, null, 2) + '\n');
      else printStudy(summary, folder, report);
      return { needed: false, reason: 'a recovery study runs its whole plan in one round' };
    },
  },
  // The shards of `plan` hold its pool, an ordinary recovery study; the grid settings are not in the pool's
  // scenario (they stay out of its hash), so resampling is left to `plan --resume` on the merged folder.
  plan: {
    planKeys: (study) => planJobs(study).map((j) => j.key),
    async finish(o) {
      const next = await mergers.run.finish!(o);
      if (!o.json) console.log(`This is the pool of a group plan: resample its studies with \`lossprobe plan SCENARIO --out ${o.folder} --resume\`.`);
      return { ...next, reason: 'the pool of a plan runs in one round; its studies are resampled by plan --resume' };
    },
  },
  // A fit's plan is one job per participant; fit.json in each shard names them and the settings
  // the summary needs, and scenario.json's hash is the fit's (scenario + data + settings).
  fit: {
    studyOf: (s) => {
      const source = join(s.folder, 'scenario.json');
      return resolveStudy(validate(scenarioSchema, s.scenario.scenario, source), source);
    },
    planKeys: (_study, first) => readFitSettings(first.folder).participants.map(participantKey),
    async finish({ folder, study, lines, toolVersion, json, first }) {
      const settings = readFitSettings(first.folder);
      await finishFit({
        folder,
        study,
        lines: lines as unknown as ParticipantLine[],
        settings,
        fitHash: first.record.scenarioHash,
        recovery: settings.recovery ? readRecoveryStudy(settings.recovery, study) : null,
        replicates: 0,
        bootstrapLines: [],
        toolVersion,
        json,
      });
      writeFitSettings(folder, settings);
      return { needed: false, reason: 'a fit runs every participant in one round (a bootstrap runs unsharded afterwards)' };
    },
  },
};

/** The study the shards ran, rebuilt from the resolved scenario they recorded; its hash must come out the same. */
function studyOfShard(s: ShardFolder): ResolvedStudy {
  const source = join(s.folder, 'scenario.json');
  const study = resolveStudy(validate(scenarioSchema, s.scenario.scenario, source), source);
  if (study.hash !== s.record.scenarioHash)
    throw new UserError(`${source}: the resolved scenario no longer gives the hash it was recorded with (written by another lossprobe version?); merge with the version that ran the shards`);
  return study;
}

/** The merged folder may be new, or a previous merge of the same study (merging again after a rerun shard); nothing else. */
function checkOutFolder(out: string, shards: readonly ShardFolder[]): void {
  if (shards.some((s) => resolve(s.folder) === resolve(out))) throw new UserError(`--out ${out} is one of the shard folders; choose the study's run folder (e.g. the folder that holds the shards)`);
  if (!existsSync(join(out, 'jobs.jsonl'))) return;
  let hash: unknown;
  try {
    hash = (JSON.parse(readFileSync(join(out, 'scenario.json'), 'utf8')) as { hash?: unknown }).hash;
  } catch {
    hash = undefined;
  }
  if (hash !== shards[0].record.scenarioHash)
    throw new UserError(`--out ${out} already holds a run of another scenario or settings; choose another folder`);
}

export async function mergeCommand(args: string[], flags: MergeFlags, toolVersion: string): Promise<void> {
  const shards = expandShardFolders(args).map(readShardFolder);
  checkSameStudy(shards);
  const first = shards[0].record;
  const merger = mergers[first.command];
  if (!merger) throw new UserError(`merge cannot finish shards of '${first.command}' (this lossprobe knows: ${Object.keys(mergers).join(', ')}); update lossprobe`);
  const { count } = first.shard;
  const merged = merger.mergeAll ? await merger.mergeAll(shards, { out: flags.out, json: flags.json ?? false, toolVersion }) : { ...(await mergeOneRound(merger, shards, flags, toolVersion)), round: undefined };
  const { jobs, failed, next, round } = merged;
  writeFileAtomically(
    join(flags.out, 'merge.json'),
    JSON.stringify({ version: 1, command: first.command, scenarioHash: first.scenarioHash, seed: first.seed, ...(round === undefined ? {} : { round }), shards: count, folders: shards.map((s) => s.folder), jobs, failedJobs: failed, nextRound: next }, null, 2) + '\n',
  );
  if (!flags.json && !merger.mergeAll) console.log(`Merged ${shards.length} shards (${jobs} jobs${failed ? `, ${failed} failed` : ''}) into ${flags.out}/.${next.needed ? ` Another round is needed: ${next.reason}${next.plan ? `; its plan is ${next.plan}` : ''}.` : ''}`);
}

/** The shards of one study's whole plan (run, plan, fit): check, join and finish as the command would. */
async function mergeOneRound(merger: Merger, shards: readonly ShardFolder[], flags: MergeFlags, toolVersion: string): Promise<{ jobs: number; failed: number; next: NextRound }> {
  const first = shards[0].record;
  const study = (merger.studyOf ?? studyOfShard)(shards[0]);
  const planKeys = merger.planKeys!(study, shards[0]);
  if (planDigest(planKeys) !== first.plan.digest)
    throw new UserError(`the shards' plan (${first.plan.jobs} jobs) differs from the plan this lossprobe builds for their scenario (${planKeys.length} jobs); merge with the version that ran the shards`);
  const { count } = first.shard;
  const lines = joinShardLines(shards, planKeys, (k) => `shard ${k}: \`lossprobe ${first.command} SCENARIO --shard ${k}/${count} --resume\` with the same flags, or \`sbatch --array=${k} array.sbatch\``);
  checkOutFolder(flags.out, shards);
  // Everything is checked; from here on the merged folder is written, each file atomically.
  openRunFolder(flags.out, { hash: first.scenarioHash, scenario: study.scenario }, true);
  writeFileAtomically(join(flags.out, 'jobs.jsonl'), lines.map((l) => JSON.stringify(l) + '\n').join(''));
  const next = await merger.finish!({ folder: flags.out, study, lines, toolVersion, json: flags.json ?? false, first: shards[0] });
  return { jobs: lines.length, failed: lines.filter((l) => l.status !== 'ok').length, next };
}
