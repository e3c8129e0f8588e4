/**
 * `lossprobe grade TRUTH --fits FITS.csv`: an outside program's answers on
 * exported synthetic data, scored like a recovery study. The answers become
 * job lines (one per synthetic participant, keyed as `run` keys them) and go
 * through the same analysis and outputs as `run` (analysis/summarize.ts), so
 * the confusion matrix, parameter recovery and report.html read the same way.
 *
 * FITS.csv: columns `participant` and `model`; either one row per participant
 * (the chosen model; 'undecided' or empty for no choice), or one row per
 * participant and fitted model with a `chosen` column (true/false). Optional:
 * `fit_status` (ok/failed), `flat_direction` (true/false), `log_likelihood`, `aic`, `aicc`, `bic`, and per
 * parameter a column named as the parameter (e.g. `motorSd`) with optional
 * `<name>.lower95` and `<name>.upper95`. `lossprobe fit` writes model-fits.csv
 * in exactly this form. Extra columns are ignored.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { FitLine, JobLine } from '../analysis/types.js';
import { parseDecimal, problemList, readCsvRows } from '../data/participantData.js';
import { resolveStudy } from '../engine/resolve.js';
import { parseTruthFile } from '../engine/truthFile.js';
import { toFree } from '../fit/transforms.js';
import { studySummary } from '../report/studyOutputs.js';
import { prepareRunFolder, printStudy, writeAtomically, writeReportOrWarn, writeStudyOutputs } from './run.js';
import { UserError } from './userError.js';

export interface GradeFlags {
  fits?: string;
  out?: string;
  overwrite?: boolean;
  json?: boolean;
}

const AT_BOUND_Z = 5; // as in fit/fitModel.ts: |free| beyond 5 is within ~0.7% of a bound
const TRUE = new Set(['true', '1', 'yes', 'TRUE', 'True']);
const FALSE = new Set(['false', '0', 'no', 'FALSE', 'False', '']);

export async function gradeCommand(truthPath: string, flags: GradeFlags, toolVersion: string): Promise<void> {
  if (!flags.fits) throw new UserError('grade needs the answers to score: --fits FITS.csv');
  let json: unknown;
  try {
    json = JSON.parse(readFileSync(truthPath, 'utf8'));
  } catch {
    throw new UserError(`cannot read the truth file '${truthPath}' as JSON (it is written by lossprobe export, as truth/truth.json)`);
  }
  const truth = parseTruthFile(json);
  if (typeof truth === 'string') throw new UserError(`${truthPath}: ${truth}`);
  const study = resolveStudy(truth.scenario, truthPath);
  if (study.hash !== truth.hash) throw new UserError(`${truthPath}: its scenario no longer matches its recorded hash (the file was edited); export again`);
  const models = new Map(study.candidates.map((c) => [c.name, c]));
  const { header, rows } = readCsvRows(flags.fits, 'fits file');
  for (const c of ['participant', 'model']) if (!header.includes(c)) throw new UserError(`${flags.fits}: the header must name a '${c}' column (found: ${header.join(', ') || 'nothing'})`);
  const hasChosen = header.includes('chosen');
  const known = new Map(truth.participants.map((p) => [p.participant, p]));
  const problems: string[] = [];
  const answers = new Map<string, { fits: FitLine[]; chosen: string[]; failed: boolean }>();
  const num = (cells: Record<string, string>, col: string, line: number): number | null => {
    const text = cells[col];
    if (text === undefined || text === '') return null;
    const v = parseDecimal(text);
    if (v === null) problems.push(`line ${line}: ${col} '${text}' is not a number`);
    return v;
  };
  for (const { line, cells } of rows) {
    const id = cells.participant;
    if (!known.has(id)) {
      problems.push(`line ${line}: participant '${id}' is not in the truth file`);
      continue;
    }
    const a = answers.get(id) ?? { fits: [], chosen: [], failed: false };
    answers.set(id, a);
    const name = cells.model;
    if (!hasChosen && (name === '' || name === 'undecided')) continue;
    const model = models.get(name);
    if (!model) {
      problems.push(`line ${line}: model '${name}' is not a candidate of the scenario (${[...models.keys()].join(', ')})`);
      continue;
    }
    if (hasChosen && !TRUE.has(cells.chosen) && !FALSE.has(cells.chosen)) problems.push(`line ${line}: chosen '${cells.chosen}' is not true or false`);
    if (!hasChosen || TRUE.has(cells.chosen)) a.chosen.push(name);
    const status = cells.fit_status === 'failed' ? 'failed' : 'ok';
    if (status === 'failed') a.failed = true;
    const parameters = model.free
      .filter((p) => header.includes(p.name) && cells[p.name] !== '')
      .map((p) => {
        const value = num(cells, p.name, line) ?? NaN;
        const free = toFree(p, value);
        return { name: p.name, value, se: NaN, lower95: num(cells, `${p.name}.lower95`, line) ?? NaN, upper95: num(cells, `${p.name}.upper95`, line) ?? NaN, free, freeSe: NaN, atBound: Math.abs(free) > AT_BOUND_Z };
      });
    a.fits.push({ model: name, status, reason: 'read from the fits file', logLikelihood: num(cells, 'log_likelihood', line), k: model.free.length, aic: num(cells, 'aic', line), aicc: num(cells, 'aicc', line), bic: num(cells, 'bic', line), parameters, flatDirection: TRUE.has(cells.flat_direction ?? ''), evaluations: 0 });
  }
  for (const [id, a] of answers) if (a.chosen.length > 1) problems.push(`participant '${id}': ${a.chosen.length} models are marked as chosen (${a.chosen.join(', ')}); mark at most one`);
  if (problems.length) throw new UserError(problemList(flags.fits, problems));
  const missing = truth.participants.filter((p) => !answers.has(p.participant)).map((p) => p.participant);
  if (missing.length) process.stderr.write(`lossprobe: warning: ${missing.length} participant(s) have no answer in ${flags.fits} and count as failed: ${missing.slice(0, 10).join(', ')}${missing.length > 10 ? ', …' : ''}\n`);

  const criterion = study.scenario.fitting.criterion;
  const lines: JobLine[] = truth.participants.map((p) => {
    const gen = models.get(p.generating)!;
    const truthFree: Record<string, number> = {};
    for (const q of gen.free) truthFree[q.name] = toFree(q, p.truth[q.name]);
    const a = answers.get(p.participant);
    const base = { key: p.key, generating: p.generating, observer: p.observer, trials: p.trials, truth: p.truth, truthFree, attempts: 1 };
    if (!a) return { ...base, status: 'failed', error: 'no answer in the fits file', fits: [], comparison: null };
    // Models the answer does not report still appear, without numbers, so the analysis reads the
    // stored decision instead of deciding again from fits that are not there.
    for (const c of study.candidates)
      if (!a.fits.some((f) => f.model === c.name))
        a.fits.push({ model: c.name, status: 'ok', reason: 'not reported in the fits file', logLikelihood: null, k: c.free.length, aic: null, aicc: null, bic: null, parameters: [], flatDirection: false, evaluations: 0 });
    a.fits.sort((x, y) => study.candidates.findIndex((c) => c.name === x.model) - study.candidates.findIndex((c) => c.name === y.model));
    const status = a.failed ? 'failed' : a.chosen.length === 1 ? 'won' : 'undecided';
    return { ...base, status: 'ok', fits: a.fits, comparison: { criterion, status, winner: status === 'won' ? a.chosen[0] : null, contenders: status === 'won' ? a.chosen : [], delta: {}, weight: {} } };
  });
  const folder = flags.out ?? join('results', `${study.scenario.name}-grade`);
  prepareRunFolder(folder, study, { overwrite: flags.overwrite });
  writeAtomically(join(folder, 'jobs.jsonl'), lines.map((l) => JSON.stringify(l) + '\n').join(''));
  const summary = studySummary(study, lines, toolVersion);
  writeStudyOutputs(folder, summary, lines);
  const reportPath = await writeReportOrWarn(folder);
  if (flags.json) process.stdout.write(JSON.stringify(summary, null, 2) + '\n');
  else printStudy(summary, folder, reportPath);
}
