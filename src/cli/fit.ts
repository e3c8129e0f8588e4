/**
 * `lossprobe fit SCENARIO --data FILE.csv`: every candidate fitted to every
 * participant on the worker pool (resumable like `run`), then per participant
 * the criteria, weights, estimates, predictive checks and decision, and at
 * group level winner counts and random-effects model selection. Optional:
 * reading winners against a recovery study, a parametric bootstrap, and a
 * parameter-draw file for planning the main study from pilot data.
 */
import Table from 'cli-table3';
import { createHash } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve as resolvePath } from 'node:path';
import { bootstrapSummaries, groupSummary, participantSummary, type BootstrapSummary, type EvidenceSource, type NestedPair } from '../analysis/groupFit.js';
import type { BootstrapLine, ParticipantLine } from '../analysis/participantTypes.js';
import { winnerAgainstRecovery, type RecoveryStudy, type WinnerAgainstRecovery } from '../analysis/recoveryLookup.js';
import { compareJobKeys } from '../analysis/jobKeys.js';
import { jsonSafe } from '../analysis/jsonSafe.js';
import { DEFAULT_COLUMNS, readParticipantData, type DataColumns } from '../data/participantData.js';
import { bootstrapKey, participantKey, toArrays, type BootstrapTask, type ParticipantTask } from '../engine/fitParticipant.js';
import { runPool } from '../engine/pool.js';
import { loadStudy, type ResolvedStudy } from '../engine/resolve.js';
import { parseShard } from '../engine/shard.js';
import { mergeHint, openShard, recordShard } from '../engine/shardFolder.js';
import { writeFitSettings, type FitSettings } from './fitSettings.js';
import { nestingOf } from '../fit/nesting.js';
import { bootstrapCsv, drawFileCsv, groupCsv, modelFitsCsv, parameterEstimatesCsv, participantsCsv, predictiveChecksCsv } from '../report/fitOutputs.js';
import { SUMMARY_VERSION } from '../report/studyOutputs.js';
import { figureName, predictiveFigure } from '../report/fitFigures.js';
import { writeFolderAtomically } from '../report/writeFolder.js';
import { prepareRunFolder, workerCount, writeAtomically, writeReportOrWarn, type RunFlags } from './run.js';
import { UserError } from './userError.js';

export interface FitFlags extends Pick<RunFlags, 'workers' | 'out' | 'resume' | 'overwrite' | 'json' | 'quiet'> {
  data?: string;
  participantColumn?: string;
  conditionColumn?: string;
  stimulusColumn?: string;
  responseColumn?: string;
  minTrials?: string;
  evidence?: string;
  recovery?: string;
  bootstrap?: string;
  drawsOut?: string;
  drawsParticipants?: string;
  shard?: string;
}

export const CAUTION =
  'A model comparison holds only under the candidate models\' assumptions; it complements, not replaces, a pilot study and the advice of your ethics board and statistician.';

function wholeNumber(flag: string, v: string | undefined, min: number, max: number): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < min || n > max) throw new UserError(`--${flag} expects a whole number from ${min} to ${max} (got '${v}')`);
  return n;
}

export function readRecoveryStudy(folder: string, study: ResolvedStudy): RecoveryStudy {
  const path = join(folder, 'summary.json');
  let s: RecoveryStudy;
  try {
    s = JSON.parse(readFileSync(path, 'utf8')) as RecoveryStudy;
  } catch {
    throw new UserError(`--recovery: cannot read ${path}; give the run folder of a finished recovery study (lossprobe run)`);
  }
  if (!s || !Array.isArray(s.models) || !s.overall) throw new UserError(`--recovery: ${path} is not the summary of a recovery study`);
  const models = study.candidates.map((c) => c.name);
  if (s.models.join('\u0000') !== models.join('\u0000'))
    throw new UserError(`--recovery: the study in ${folder} compared the models ${s.models.join(', ')}, but this scenario has ${models.join(', ')}; run the recovery study on the same scenario`);
  return s;
}

/** Whether the recovery study ran on exactly this scenario (same resolved hash) or only on the same candidate set. */
function recoveryNote(r: RecoveryStudy, study: ResolvedStudy): string {
  const hash = (r as { provenance?: { scenarioHash?: string } }).provenance?.scenarioHash;
  return hash === study.hash
    ? 'the recovery study ran on exactly this scenario'
    : 'the recovery study ran on a different version of this scenario (same candidate models, other settings: its hash differs); its figures apply only as far as the designs agree';
}

function nestedPairs(study: ResolvedStudy): NestedPair[] {
  const out: NestedPair[] = [];
  for (const a of study.candidates)
    for (const b of study.candidates) {
      const n = nestingOf(a.lossFamily, b.lossFamily);
      // The outer model contains the inner one only if its loss parameter is free to reach the nesting point.
      const reaches = a.free.some((p) => p.name.startsWith('loss.'));
      if (n && a !== b && reaches && n.outer === a.lossFamily && n.inner === b.lossFamily) out.push({ outer: a.name, inner: b.name, at: n.at });
    }
  return out;
}

/** The data file's columns: flags first, then the scenario's data block, then the defaults. */
export function fitColumns(s: ResolvedStudy['scenario'], flags: FitFlags): DataColumns {
  return {
    participant: flags.participantColumn ?? s.data?.participant ?? DEFAULT_COLUMNS.participant,
    condition: flags.conditionColumn ?? s.data?.condition ?? DEFAULT_COLUMNS.condition,
    stimulus: flags.stimulusColumn ?? s.data?.stimulus ?? DEFAULT_COLUMNS.stimulus,
    response: flags.responseColumn ?? s.data?.response ?? DEFAULT_COLUMNS.response,
  };
}

/** The participants a fit of this scenario would read from `data` (used by `cluster` to size the array). */
export function fitParticipants(study: ResolvedStudy, data: string, flags: FitFlags = {}): ReturnType<typeof readParticipantData> {
  const s = study.scenario;
  const minTrials = wholeNumber('min-trials', flags.minTrials, 1, 1e6) ?? s.data?.minTrials ?? 20;
  return readParticipantData(data, { columns: fitColumns(s, flags), conditions: s.conditions.map((c) => c.name), lower: s.response.lower, upper: s.response.upper, minTrials });
}

export async function fitCommand(file: string, flags: FitFlags, toolVersion: string): Promise<void> {
  if (!flags.data) throw new UserError('fit needs the participants\' data: --data FILE.csv');
  const study = loadStudy(file);
  const s = study.scenario;
  const columns = fitColumns(s, flags);
  const minTrials = wholeNumber('min-trials', flags.minTrials, 1, 1e6) ?? s.data?.minTrials ?? 20;
  const evidence = (flags.evidence ?? (s.fitting.criterion === 'cv' ? 'cv' : 'bic')) as EvidenceSource;
  if (evidence !== 'bic' && evidence !== 'cv') throw new UserError(`--evidence expects 'bic' (−BIC/2, the default) or 'cv' (cross-validated log-likelihood) (got '${flags.evidence}')`);
  const replicates = wholeNumber('bootstrap', flags.bootstrap, 1, 10_000) ?? 0;
  const workers = workerCount(flags.workers);
  const recovery = flags.recovery ? readRecoveryStudy(flags.recovery, study) : null;
  const participants = readParticipantData(flags.data, { columns, conditions: s.conditions.map((c) => c.name), lower: s.response.lower, upper: s.response.upper, minTrials });
  if (flags.drawsOut && !existsSync(dirname(resolvePath(flags.drawsOut)))) throw new UserError(`--draws-out: the folder of '${flags.drawsOut}' does not exist`);
  if (flags.drawsParticipants && !flags.drawsOut) throw new UserError('--draws-participants needs --draws-out FILE');
  const drawIds = flags.drawsParticipants?.split(',').map((x) => x.trim()).filter(Boolean);
  for (const id of drawIds ?? []) if (!participants.some((p) => p.participant === id)) throw new UserError(`--draws-participants: no participant '${id}' in ${flags.data}`);

  // The folder's identity: scenario, data and the settings that change job lines.
  const hash = createHash('sha256')
    .update(study.hash)
    .update(JSON.stringify(participants.map((p) => [p.participant, toArrays(p.data)])))
    .update(JSON.stringify({ evidence, replicates }))
    .digest('hex');
  const base = flags.out ?? join('results', `${s.name}-fit`);
  const settings: FitSettings = {
    version: 1,
    dataFile: flags.data,
    columns,
    evidence,
    participants: participants.map((p) => p.participant),
    ...(flags.recovery ? { recovery: flags.recovery } : {}),
    ...(flags.drawsOut ? { drawsOut: flags.drawsOut } : {}),
    ...(drawIds ? { drawsParticipants: drawIds } : {}),
  };

  const crossValidate = evidence === 'cv';
  const tasks = participants.map((p) => {
    const key = participantKey(p.participant);
    const task: ParticipantTask = { kind: 'participant', scenario: s, hash: study.hash, key, participant: p.participant, trials: toArrays(p.data), crossValidate };
    return { key, task };
  });
  let folder = base;
  let jobs = tasks;
  if (flags.shard !== undefined) {
    if (replicates > 0)
      throw new UserError('--bootstrap cannot be combined with --shard: the bootstrap stage needs every participant\'s fit and stays unsharded; drop --bootstrap to fit the participants in shards, or run `lossprobe fit SCENARIO --data FILE --bootstrap N` on one machine without --shard (it fits the participants as well)');
    const shard = parseShard(flags.shard);
    if (typeof shard === 'string') throw new UserError(shard);
    const opened = openShard({ base, shard, command: 'fit', name: s.name, scenarioHash: hash, seed: s.seed, plan: tasks });
    folder = opened.folder;
    jobs = opened.jobs;
    prepareRunFolder(folder, { hash, scenario: s }, flags);
    recordShard(folder, opened.record);
    writeFitSettings(folder, settings);
  } else prepareRunFolder(folder, { hash, scenario: s }, flags);
  const worker = new URL('../engine/fitWorker.js', import.meta.url);
  const quiet = flags.quiet || flags.json;
  const fitted = await runPool<ParticipantTask, ParticipantLine>({
    path: join(folder, 'jobs.jsonl'),
    worker,
    jobs,
    workers,
    quiet,
    failedLine: (key, message) => ({ key, participant: tasks.find((t) => t.key === key)!.task.participant, trials: 0, status: 'failed', error: message, fits: [], comparison: null, predictive: [] }),
  });
  interruptedExit(fitted.interrupted, folder);
  const lines = [...fitted.lines].sort((a, b) => compareJobKeys(a.key, b.key));
  if (flags.shard !== undefined) {
    // A shard writes no summary: group-level selection needs every participant.
    if (!flags.json) console.log(`Fitted ${lines.length} participant(s) of shard ${flags.shard} into ${folder}/. Once every shard has finished: ${mergeHint(base, Number(flags.shard.split('/')[1]))}`);
    return;
  }
  const summaries = lines.map(participantSummary);

  let bootstrapLines: BootstrapLine[] = [];
  if (replicates > 0) {
    const jobs: { key: string; task: BootstrapTask }[] = [];
    for (const p of summaries) {
      const data = participants.find((q) => q.participant === p.participant)!.data;
      for (const source of [p.best, p.runnerUp]) {
        if (!source) continue;
        const model = study.candidates.find((c) => c.name === source)!;
        const values = { ...model.base };
        for (const q of p.models.find((m) => m.model === source)!.parameters) values[q.name] = q.estimate;
        for (let r = 0; r < replicates; r++) {
          const key = bootstrapKey(p.participant, source, r);
          jobs.push({ key, task: { kind: 'bootstrap', scenario: s, hash: study.hash, key, participant: p.participant, source, replicate: r, values, trials: toArrays(data) } });
        }
      }
    }
    const boot = await runPool<BootstrapTask, BootstrapLine>({
      path: join(folder, 'bootstrap.jsonl'),
      worker,
      jobs,
      workers,
      quiet,
      failedLine: (key, message) => {
        const t = jobs.find((j) => j.key === key)!.task;
        return { key, participant: t.participant, source: t.source, replicate: t.replicate, status: 'failed', error: message, comparisonStatus: null, winner: null };
      },
    });
    interruptedExit(boot.interrupted, folder);
    bootstrapLines = boot.lines;
  }

  await finishFit({ folder, study, lines, summaries, settings, fitHash: hash, recovery, replicates, bootstrapLines, toolVersion, json: flags.json ?? false });
}

/**
 * Everything a fit writes once every participant is fitted: summary.json, the
 * CSV files, figures and the optional draw file. Shared by `fit` and by
 * `merge` of fit shards, so both give the same folder.
 */
export async function finishFit(o: {
  folder: string;
  study: ResolvedStudy;
  lines: ParticipantLine[];
  summaries?: ReturnType<typeof participantSummary>[];
  settings: FitSettings;
  fitHash: string;
  recovery: RecoveryStudy | null;
  replicates: number;
  bootstrapLines: BootstrapLine[];
  toolVersion: string;
  json: boolean;
}): Promise<void> {
  const { folder, study, lines, recovery, replicates, bootstrapLines, toolVersion, settings } = o;
  const s = study.scenario;
  const summaries = o.summaries ?? lines.map(participantSummary);
  const evidence = settings.evidence;
  const hash = o.fitHash;
  const flags = { data: settings.dataFile, recovery: settings.recovery, drawsOut: settings.drawsOut, json: o.json };
  const columns = settings.columns;
  const drawIds = settings.drawsParticipants;
  const candidates = study.candidates.map((c) => c.name);
  const group = groupSummary(lines, s.fitting.criterion, { candidates, evidence, nested: nestedPairs(study) });
  const bootstrap = bootstrapSummaries(bootstrapLines, new Map(summaries.map((p) => [p.participant, p.decision])));
  const againstRecovery: WinnerAgainstRecovery[] = [];
  if (recovery)
    for (const p of summaries) {
      if (!candidates.includes(p.decision)) continue;
      const params = p.models.find((m) => m.model === p.decision)!.parameters;
      const r = winnerAgainstRecovery(recovery, p.participant, p.decision, p.trials, params);
      if (r) againstRecovery.push(r);
    }
  const summary = jsonSafe({
    version: SUMMARY_VERSION,
    kind: 'fit',
    name: s.name,
    models: candidates,
    criterion: s.fitting.criterion,
    dataFile: flags.data,
    columns,
    provenance: { tool: 'lossprobe', toolVersion, node: process.version, scenarioHash: study.hash, fitHash: hash },
    caution: CAUTION,
    group,
    participants: summaries,
    ...(recovery ? { againstRecovery: { folder: flags.recovery, note: recoveryNote(recovery, study), participants: againstRecovery } } : {}),
    ...(replicates > 0 ? { bootstrap: { replicatesPerModel: replicates, results: bootstrap } } : {}),
  });
  writeAtomically(join(folder, 'summary.json'), JSON.stringify(summary, null, 2) + '\n');
  writeAtomically(join(folder, 'model-fits.csv'), modelFitsCsv(summaries));
  writeAtomically(join(folder, 'parameter-estimates.csv'), parameterEstimatesCsv(summaries));
  writeAtomically(join(folder, 'participants.csv'), participantsCsv(summaries, againstRecovery, bootstrap));
  writeAtomically(join(folder, 'group.csv'), groupCsv(group));
  writeAtomically(join(folder, 'predictive-checks.csv'), predictiveChecksCsv(summaries));
  if (replicates > 0) writeAtomically(join(folder, 'bootstrap.csv'), bootstrapCsv(bootstrap));
  const figures: Record<string, string> = {};
  for (const p of summaries) {
    const svg = await predictiveFigure(p);
    if (svg) figures[figureName(p.participant)] = svg;
  }
  writeFolderAtomically(join(folder, 'figures'), figures);
  if (flags.drawsOut) {
    const chosen = drawIds ? summaries.filter((p) => drawIds.includes(p.participant)) : summaries;
    writeAtomically(flags.drawsOut, drawFileCsv(chosen));
  }
  // As for run: a report that cannot be drawn warns and leaves the fit intact (it rewrites figures/, predictive plots included).
  await writeReportOrWarn(folder);
  if (flags.json) process.stdout.write(JSON.stringify(summary, null, 2) + '\n');
  else printFit(summaries, group, againstRecovery, bootstrap, recovery ? recoveryNote(recovery, study) : null, folder);
}

function interruptedExit(interrupted: boolean, folder: string): void {
  if (!interrupted) return;
  process.stderr.write(`lossprobe: interrupted; finished participants are kept in ${folder}. Continue with --resume.\n`);
  process.exit(130);
}

function bootCell(boot: BootstrapSummary[], participant: string, best: string | null): string {
  const b = boot.find((x) => x.participant === participant && x.source === best);
  return b && b.choseSource !== null ? `${Math.round(100 * b.choseSource)}% of ${b.replicates - b.failed}` : '–';
}

const fixed = (x: number | null | undefined, d = 2) => (x === null || x === undefined || !Number.isFinite(x) ? '–' : x.toFixed(d));

function printFit(ps: ReturnType<typeof participantSummary>[], g: ReturnType<typeof groupSummary>, rec: WinnerAgainstRecovery[], boot: BootstrapSummary[], recNote: string | null, folder: string): void {
  console.log(`\nFitted ${ps.length} participant(s); criterion ${g.criterion.toUpperCase()}.`);
  const t = new Table({ head: ['participant', 'trials', 'decision', 'runner-up', 'Δ runner-up', 'weight of best', ...(rec.length ? ['right in simulation'] : []), ...(boot.length ? ['bootstrap: same choice'] : [])], style: { head: [], border: [] } });
  const r = new Map(rec.map((x) => [x.participant, x]));
  for (const p of ps) {
    const runner = p.models.find((m) => m.model === p.runnerUp);
    const best = p.models.find((m) => m.model === p.best);
    t.push([p.participant, p.trials, p.decision, p.runnerUp ?? '–', fixed(runner?.differenceToBest), fixed(best?.weight), ...(rec.length ? [r.get(p.participant) ? `${fixed(r.get(p.participant)!.choiceRightInSimulation)} (at ${r.get(p.participant)!.recoveryTrials} trials)` : '–'] : []), ...(boot.length ? [bootCell(boot, p.participant, p.best)] : [])]);
  }
  console.log(t.toString());
  const re = g.randomEffects;
  const gt = new Table({ head: ['model', 'participants won', ...(re ? ['expected frequency', 'exceedance', 'protected exceedance'] : [])], style: { head: [], border: [] } });
  g.winnerCounts.forEach((w, i) => gt.push([w.model, w.participants, ...(re ? [fixed(re.expectedFrequency[i]), fixed(re.exceedanceProbability[i], 3), fixed(re.protectedExceedanceProbability[i], 3)] : [])]));
  console.log(gt.toString());
  console.log(`Undecided: ${g.undecided}; failed: ${g.failed}.`);
  if (re) console.log(`Random-effects selection (Stephan et al. 2009; Rigoux et al. 2014) on ${re.logEvidenceDescription}; Bayesian omnibus risk ${fixed(re.bayesianOmnibusRisk, 3)}.`);
  for (const w of g.warnings) console.log(`Warning: ${w}`);
  if (recNote) console.log(`Recovery study: ${recNote}.`);
  console.log(`\n${CAUTION}`);
  console.log(`Run folder: ${folder}/ (summary.json, jobs.jsonl, model-fits.csv, parameter-estimates.csv, participants.csv, group.csv, predictive-checks.csv, figures/predictive-*.svg, report.html)`);
}
