/**
 * Everything after jobs.jsonl: summary.json (the machine-readable contract,
 * versioned) and tidy CSV files, all recomputable from the job lines.
 */
import { summarize, summarizeByTrials, jsonSafe, type Summary } from '../analysis/index.js';
import { sortJobLines } from '../analysis/jobKeys.js';
import type { JobLine } from '../analysis/types.js';
import type { ResolvedStudy } from '../engine/resolve.js';
import { csvTable } from './csv.js';

export const SUMMARY_VERSION = 1;

export interface Provenance {
  tool: string;
  toolVersion: string;
  node: string;
  scenarioHash: string;
}

export interface StudySummary {
  version: number;
  name: string;
  seed: number;
  models: string[];
  generating: string[];
  criterion: string;
  provenance: Provenance;
  /** Analysis of every job (all trial counts together when there is one count). */
  overall: Summary;
  /** Per trial count, when the study has more than one. */
  byTrials?: Record<string, Summary>;
  // Contract fields at the top level, for tools that read summary.json directly.
  confusion: { counts: (number | null)[][]; rate: (number | null)[][] };
  inversion: { rate: (number | null)[][] };
  failed: (number | null)[];
  undecided: (number | null)[];
  accuracy: { estimate: number | null; lower: number | null; upper: number | null };
  recovery: Summary['recovery'];
}

export function studySummary(study: ResolvedStudy, lines: readonly JobLine[], toolVersion: string): StudySummary {
  const models = study.candidates.map((c) => c.name);
  const opts = { candidates: models, generating: study.generating, criterion: study.scenario.fitting.criterion, margin: study.scenario.fitting.margin };
  const sorted = sortJobLines(lines);
  const overall = summarize(sorted, opts);
  const byTrials = study.trialCounts.length > 1 ? summarizeByTrials(sorted, opts) : undefined;
  return jsonSafe({
    version: SUMMARY_VERSION,
    name: study.scenario.name,
    seed: study.scenario.seed,
    models,
    generating: study.generating,
    criterion: study.scenario.fitting.criterion,
    provenance: { tool: 'lossprobe', toolVersion, node: process.version, scenarioHash: study.hash },
    overall,
    ...(byTrials ? { byTrials } : {}),
    confusion: { counts: overall.confusion.counts, rate: overall.confusion.rate },
    inversion: { rate: overall.inversion.rate },
    failed: overall.failed,
    undecided: overall.undecided,
    accuracy: { estimate: overall.accuracy.estimate, lower: overall.accuracy.lower, upper: overall.accuracy.upper },
    recovery: overall.recovery,
  }) as unknown as StudySummary;
}

const csv = csvTable;

/** One row per (job, candidate fit). */
export function fitsCsv(lines: readonly JobLine[]): string {
  const rows: unknown[][] = [];
  for (const l of sortJobLines(lines)) {
    if (l.status !== 'ok') {
      rows.push([l.key, l.generating, l.observer, l.trials, '', 'job-failed', '', '', '', '', '', '', 'failed', l.error ?? '']);
      continue;
    }
    for (const f of l.fits)
      rows.push([l.key, l.generating, l.observer, l.trials, f.model, f.status, f.logLikelihood, f.k, f.aic, f.aicc, f.bic, l.comparison?.winner === f.model, l.comparison?.status, f.reason]);
  }
  return csv(['job', 'generating', 'observer', 'trials', 'model', 'fit_status', 'log_likelihood', 'parameters', 'aic', 'aicc', 'bic', 'chosen', 'comparison', 'note'], rows);
}

/** One row per (job, candidate, parameter), with the truth where the candidate generated the data. */
export function parametersCsv(lines: readonly JobLine[]): string {
  const rows: unknown[][] = [];
  for (const l of sortJobLines(lines))
    for (const f of l.fits)
      for (const p of f.parameters)
        rows.push([l.key, l.generating, l.observer, l.trials, f.model, p.name, f.model === l.generating ? l.truth[p.name] : null, p.value, p.se, p.lower95, p.upper95, p.atBound]);
  return csv(['job', 'generating', 'observer', 'trials', 'model', 'parameter', 'true_value', 'fitted_value', 'standard_error', 'lower_95', 'upper_95', 'at_bound'], rows);
}

/** One row per (trials, generating model, outcome column). */
export function confusionCsv(summary: StudySummary): string {
  const rows: unknown[][] = [];
  const add = (trials: string, s: Summary) => {
    const c = s.confusion;
    c.rows.forEach((gen, i) => {
      c.columns.forEach((col, j) => rows.push([trials, gen, col, c.counts[i][j], c.n[i], c.rate[i][j], c.lower[i][j], c.upper[i][j]]));
      rows.push([trials, gen, 'undecided', c.undecided[i], c.n[i], c.undecidedRate[i], null, null]);
      rows.push([trials, gen, 'failed', c.failed[i], c.n[i], c.failedRate[i], null, null]);
    });
  };
  if (summary.byTrials) for (const [t, s] of Object.entries(summary.byTrials)) add(t, s);
  else add(String(summary.overall.trials.join('+')), summary.overall);
  return csv(['trials', 'generating', 'chosen', 'count', 'datasets', 'rate', 'lower_95', 'upper_95'], rows);
}

/** Inversion matrix rows: P(generating | chosen). */
export function inversionCsv(summary: StudySummary): string {
  const inv = summary.overall.inversion;
  const rows: unknown[][] = [];
  inv.rows.forEach((gen, i) => inv.columns.forEach((chosen, j) => rows.push([chosen, gen, inv.rate[i][j]])));
  return csv(['chosen', 'generating', 'probability'], rows);
}
