/**
 * Joining shard folders back into one run: read each folder (shard.json,
 * scenario.json, jobs.jsonl), check that they are slices of one plan of one
 * study, and check the jobs against the plan: every planned job exactly once,
 * each in the shard the fixed assignment (src/engine/shard.ts) gives it.
 * Every problem is collected and reported in one message that names the
 * folders, shard numbers and job keys, so one look says what to rerun.
 * Pure checks over what is on disk; nothing here writes.
 */
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { compareJobKeys, sortJobLines } from '../analysis/jobKeys.js';
import { UserError } from '../cli/userError.js';
import { readJobLines } from './store.js';
import { readShardRecord, SHARD_FILE, type ShardRecord } from './shardFolder.js';

export interface ShardFolder {
  folder: string;
  record: ShardRecord;
  /** scenario.json as the shard wrote it: the resolved scenario and its hash. */
  scenario: { hash: string; scenario: unknown };
  lines: JobLine[];
}

/** How many job keys a message lists before saying "and N more". */
const LIST_AT_MOST = 5;

function listKeys(keys: readonly string[]): string {
  const shown = keys.slice(0, LIST_AT_MOST).join(', ');
  return keys.length > LIST_AT_MOST ? `${shown} and ${keys.length - LIST_AT_MOST} more` : shown;
}

/**
 * The shard folders named on the command line. A folder that is not itself a
 * shard but holds shard folders (a study's run folder) stands for all of them,
 * so `merge results/x --out results/x` works as well as a shell glob.
 */
export function expandShardFolders(args: readonly string[]): string[] {
  const out: string[] = [];
  for (const a of args) {
    if (existsSync(join(a, SHARD_FILE)) || !existsSync(a) || !statSync(a).isDirectory()) {
      out.push(a);
      continue;
    }
    const inner = readdirSync(a)
      .filter((d) => /^shard-\d+-of-\d+$/.test(d) && existsSync(join(a, d, SHARD_FILE)))
      .sort()
      .map((d) => join(a, d));
    const rounds = readdirSync(a).filter((d) => /^round-\d+$/.test(d)).sort((x, y) => Number(x.slice(6)) - Number(y.slice(6)));
    if (!inner.length && rounds.length && !existsSync(join(a, SHARD_FILE)))
      throw new UserError(`${a} is the run folder of a trial-count sweep run in rounds (${rounds.join(', ')}); merge one round at a time, the round just run: lossprobe merge ${join(a, rounds[rounds.length - 1])} --out ${a}`);
    out.push(...(inner.length ? inner : [a]));
  }
  return out;
}

export function readShardFolder(folder: string): ShardFolder {
  if (!existsSync(folder) || !statSync(folder).isDirectory()) throw new UserError(`${folder}: no such folder (merge expects the shard folders written by \`lossprobe run --shard K/N\`, e.g. results/<name>/shard-003-of-008)`);
  const record = readShardRecord(folder);
  if (!record) throw new UserError(`${folder} is not a shard folder: it has no ${SHARD_FILE} (shard folders are written by \`lossprobe run --shard K/N\`, one per shard)`);
  const scenarioPath = join(folder, 'scenario.json');
  let scenario: { hash: string; scenario: unknown };
  try {
    scenario = JSON.parse(readFileSync(scenarioPath, 'utf8')) as { hash: string; scenario: unknown };
  } catch (e) {
    throw new UserError(`${scenarioPath}: cannot read the shard's resolved scenario (${(e as Error).message}); rerun that shard`);
  }
  if (scenario.hash !== record.scenarioHash || !scenario.scenario)
    throw new UserError(`${folder}: scenario.json does not match the scenario hash in ${SHARD_FILE} (edited by hand?); rerun that shard`);
  return { folder, record, scenario, lines: readJobLines(join(folder, 'jobs.jsonl')).lines };
}

/** "value (folder, folder); value (folder)": which folders hold which value of a field. */
function groupsOf(shards: readonly ShardFolder[], value: (s: ShardFolder) => string): string[] | null {
  const groups = new Map<string, string[]>();
  for (const s of shards) groups.set(value(s), [...(groups.get(value(s)) ?? []), s.folder]);
  return groups.size > 1 ? [...groups].map(([v, folders]) => `${v} (${folders.join(', ')})`) : null;
}

/** Refuse to join folders that are not slices of one split of one study's plan. */
export function checkSameStudy(shards: readonly ShardFolder[]): void {
  const checks: [string, (s: ShardFolder) => string, string][] = [
    ['shards of different commands', (s) => `'${s.record.command}'`, 'merge joins the shards of one command at a time'],
    ['different seeds', (s) => `seed ${s.record.seed}`, 'every shard of a study must run with the same scenario file and the same --seed'],
    ['different scenarios or settings', (s) => `scenario '${s.record.name}', hash ${s.record.scenarioHash.slice(0, 12)}…`, 'every shard of a study must run with the same scenario file and the same flags (--observers, --trials, --seed)'],
    ['shards of different rounds', (s) => `round ${s.record.round ?? 1}`, 'merge joins one round of a sweep at a time: give the shard folders of one round (e.g. results/<name>-size/round-2), after merging the rounds before it'],
    ['different splits', (s) => `${s.record.shard.count} shards`, 'every shard must use the same N in --shard K/N'],
    ['different plans', (s) => `plan ${s.record.plan.digest.slice(0, 12)}… of ${s.record.plan.jobs} jobs`, 'the shards belong to different rounds or lossprobe versions'],
  ];
  for (const [what, value, advice] of checks) {
    const groups = groupsOf(shards, value);
    if (groups) throw new UserError(`merge refuses: the folders hold ${what}: ${groups.join('; ')}. ${advice[0].toUpperCase()}${advice.slice(1)}.`);
  }
  const byIndex = new Map<number, string[]>();
  for (const s of shards) byIndex.set(s.record.shard.index, [...(byIndex.get(s.record.shard.index) ?? []), s.folder]);
  const twice = [...byIndex].filter(([, f]) => f.length > 1);
  if (twice.length)
    throw new UserError(`merge refuses: ${twice.map(([k, f]) => `shard ${k} of ${shards[0].record.shard.count} is given ${f.length} times (${f.join(', ')})`).join('; ')}. Give each shard folder once.`);
}

/**
 * Every planned job exactly once, each from the shard it belongs to; returns
 * the joined lines in key order. Refuses (naming shards and keys) otherwise.
 */
export function joinShardLines(shards: readonly ShardFolder[], planKeys: readonly string[], resumeHint: (shard: number) => string): JobLine[] {
  const count = shards[0].record.shard.count;
  const shardOf = new Map([...planKeys].sort(compareJobKeys).map((k, i) => [k, (i % count) + 1]));
  const seenIn = new Map<string, string[]>();
  const problems: string[] = [];
  for (const s of shards) {
    const foreign: string[] = [];
    const misplaced: string[] = [];
    for (const l of s.lines) {
      const home = shardOf.get(l.key);
      if (home === undefined) foreign.push(l.key);
      else if (home !== s.record.shard.index) misplaced.push(`${l.key} (belongs to shard ${home})`);
      seenIn.set(l.key, [...(seenIn.get(l.key) ?? []), s.folder]);
    }
    if (foreign.length) problems.push(`${s.folder} holds ${foreign.length} job${foreign.length > 1 ? 's' : ''} that the study's plan does not have: ${listKeys(foreign)}`);
    if (misplaced.length) problems.push(`${s.folder} (shard ${s.record.shard.index} of ${count}) holds jobs of other shards: ${listKeys(misplaced)}`);
  }
  const duplicated = [...seenIn].filter(([, f]) => f.length > 1).sort((a, b) => compareJobKeys(a[0], b[0]));
  if (duplicated.length)
    problems.push(`${duplicated.length} job${duplicated.length > 1 ? 's appear' : ' appears'} more than once: ${listKeys(duplicated.map(([k, f]) => `${k} (${f.length}× in ${[...new Set(f)].join(', ')})`))}`);
  const folderOf = new Map(shards.map((s) => [s.record.shard.index, s.folder]));
  const missingBy = new Map<number, string[]>();
  for (const [k, shard] of shardOf) if (!seenIn.has(k)) missingBy.set(shard, [...(missingBy.get(shard) ?? []), k]);
  const incomplete = [...missingBy.keys()].sort((a, b) => a - b);
  for (const k of incomplete) {
    const keys = missingBy.get(k)!;
    const planned = [...shardOf.values()].filter((v) => v === k).length;
    const where = folderOf.has(k) ? `shard ${k} of ${count} (${folderOf.get(k)}) lacks ${keys.length} of its ${planned} jobs` : `shard ${k} of ${count} is missing (no folder given; ${planned} jobs)`;
    problems.push(`${where}: ${listKeys(keys)}`);
  }
  if (problems.length) {
    const advice = [
      incomplete.length ? `Run the missing or unfinished shards (${incomplete.map(resumeHint).join('; ')}), then merge again.` : '',
      duplicated.length ? 'A job appears twice when a shard folder is given twice or lines were copied between folders; give each shard once.' : '',
    ].filter(Boolean);
    throw new UserError(`merge refuses: the shards do not hold the study's plan exactly once.\n${problems.map((p) => `  - ${p}`).join('\n')}${advice.length ? `\n${advice.join(' ')}` : ''}`);
  }
  return sortJobLines(shards.flatMap((s) => s.lines));
}
