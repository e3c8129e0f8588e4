/**
 * What a report is made from: the contents of a run folder, read once.
 * summary.json and scenario.json are embedded in the page unchanged (the raw
 * values behind every displayed number); job lines feed the scatter plots.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { JobLine } from '../../analysis/types.js';
import { compareJobKeys } from '../../analysis/jobKeys.js';
import type { StudySummary } from '../studyOutputs.js';
import type { Scenario } from '../../scenario/schema.js';
import { UserError } from '../../cli/userError.js';

/** scenario.json of a run folder. */
export interface ScenarioRecord {
  hash: string;
  scenario: Scenario;
}

/**
 * summary.json as the report reads it: the recovery-study contract plus the
 * optional objects other commands add. Sections test for what they need.
 */
export type ReportSummary = StudySummary & {
  /** Added by `size`: the target and trials needed (shape owned by the sizing code). */
  sizing?: { target?: number } & Record<string, unknown>;
  /** Added by `plan`: P(correct group conclusion) over participants × trials (shape owned by report/planSummary.ts). */
  plan?: Record<string, unknown>;
  /** Design variants compared side by side: one study summary per variant. */
  variants?: { name: string; overall: StudySummary['overall'] }[];
} & Record<string, unknown>;

/** Choices the report makes itself (embedded beside the summary, so they are raw values too). */
export interface ReportSettings {
  /** Recovery rate drawn as the target line of trial-count curves. */
  target: number;
  /** The trial count whose confusion matrix and parameter recovery are shown. */
  focusTrials: number | null;
}

export interface ReportData {
  folder: string;
  summary: ReportSummary;
  scenario: ScenarioRecord;
  lines: JobLine[];
  settings: ReportSettings;
}

/** The object embedded in the page; data paths of displayed numbers start at its keys. */
export interface EmbeddedData {
  summary: ReportSummary;
  scenario: ScenarioRecord;
  report: ReportSettings;
}

/** The default target of a trial-count sweep when summary.json does not name one (common practice: 80%). */
export const DEFAULT_TARGET = 0.8;

function readJsonFile<T>(path: string, what: string): T {
  if (!existsSync(path)) throw new UserError(`${path} is missing: ${what}`);
  try {
    return JSON.parse(readFileSync(path, 'utf8')) as T;
  } catch (e) {
    throw new UserError(`${path} is not valid JSON (${(e as Error).message}); recompute it with the command that wrote the run folder`);
  }
}

/** Job lines; a half-written last line (an interrupted run) is skipped, as resume does. */
function readLines(path: string): JobLine[] {
  if (!existsSync(path)) return [];
  const out: JobLine[] = [];
  for (const text of readFileSync(path, 'utf8').split('\n')) {
    if (!text.trim()) continue;
    try {
      out.push(JSON.parse(text) as JobLine);
    } catch {
      // Only the last line can be cut short; recovery plots simply omit it.
    }
  }
  // Key order, not file order: the file's order depends on worker timing and on
  // how shards were merged, and the report must not (same seed, same report).
  return out.sort((a, b) => compareJobKeys(a.key, b.key));
}

/** A folder written by `lossprobe fit` (real participants' data), not by a recovery study. */
export const isFitFolder = (d: { summary: ReportSummary }) => d.summary.kind === 'fit';

/** Sections about simulated recovery apply only to recovery-study folders. */
export const isRecoveryFolder = (d: { summary: ReportSummary }) => !isFitFolder(d);

export function trialCountsOf(summary: ReportSummary): number[] {
  if (!summary.overall) return [];
  return summary.byTrials ? Object.keys(summary.byTrials).map(Number).sort((a, b) => a - b) : summary.overall.trials.filter((t): t is number => t !== null);
}

export function readRunFolder(folder: string): ReportData {
  if (!existsSync(folder)) throw new UserError(`run folder ${folder} does not exist`);
  const summary = readJsonFile<ReportSummary>(join(folder, 'summary.json'), 'a report needs the summary written at the end of `lossprobe run` (finish or --resume the run first)');
  const scenario = readJsonFile<ScenarioRecord>(join(folder, 'scenario.json'), 'a report needs the resolved scenario of the run');
  const fit = typeof summary === 'object' && summary !== null && summary.kind === 'fit';
  if (typeof summary !== 'object' || !summary || !Array.isArray(summary.models) || (fit ? !Array.isArray(summary.participants) || !summary.group : !summary.overall))
    throw new UserError(`${join(folder, 'summary.json')}: expected a lossprobe summary with 'models' and 'overall' (a recovery study) or 'participants' and 'group' (a fit)`);
  if (typeof scenario !== 'object' || !scenario || typeof scenario.hash !== 'string' || !scenario.scenario)
    throw new UserError(`${join(folder, 'scenario.json')}: expected {hash, scenario} as written by lossprobe run`);
  const counts = trialCountsOf(summary);
  const target = typeof summary.sizing?.target === 'number' ? summary.sizing.target : DEFAULT_TARGET;
  return {
    folder,
    summary,
    scenario,
    lines: readLines(join(folder, 'jobs.jsonl')),
    settings: { target, focusTrials: summary.byTrials && counts.length ? counts[counts.length - 1] : null },
  };
}
