/**
 * The jobs of `fit`: every candidate fitted to one participant's data (with a
 * posterior-predictive check per model), and one parametric-bootstrap
 * replicate (a dataset simulated from a fitted model on the participant's own
 * trials, refitted by every candidate). Pure functions of the task; random
 * streams are seeded from the data's content, so any process gives the same line.
 */
import type { BootstrapLine, ParticipantLine } from '../analysis/participantTypes.js';
import { predictiveCheck } from '../analysis/predictiveCheck.js';
import { datasetDigest } from '../fit/contentSeed.js';
import { observerFromValues } from '../fit/candidate.js';
import { streamFromKey } from '../numerics/rng.js';
import type { Dataset } from '../observer/observer.js';
import { simulateResponses } from '../observer/sampler.js';
import type { Scenario } from '../scenario/schema.js';
import { fitDataset } from './runJob.js';
import type { ResolvedStudy } from './resolve.js';

/** Simulated datasets pooled per posterior-predictive check. */
export const PREDICTIVE_REPLICATES = 20;

export interface TrialArrays {
  stimulus: number[];
  condition: number[];
  response: number[];
}

export interface ParticipantTask {
  kind: 'participant';
  scenario: Scenario;
  hash: string;
  key: string;
  participant: string;
  trials: TrialArrays;
  crossValidate: boolean;
}

export interface BootstrapTask {
  kind: 'bootstrap';
  scenario: Scenario;
  hash: string;
  key: string;
  participant: string;
  source: string;
  replicate: number;
  /** All parameter values of the source model (fitted values over its base values). */
  values: Record<string, number>;
  trials: TrialArrays;
}

export type FitTask = ParticipantTask | BootstrapTask;

export const participantKey = (id: string) => `participant=${encodeURIComponent(id)}`;
export const bootstrapKey = (id: string, source: string, replicate: number) =>
  `${participantKey(id)}/source=${encodeURIComponent(source)}/replicate=${String(replicate).padStart(4, '0')}`;

export function toDataset(t: TrialArrays): Dataset {
  return { stimulus: Float64Array.from(t.stimulus), condition: Int32Array.from(t.condition), response: Float64Array.from(t.response) };
}

export function toArrays(d: Dataset): TrialArrays {
  return { stimulus: Array.from(d.stimulus), condition: Array.from(d.condition), response: Array.from(d.response) };
}

function repeated(d: Dataset, times: number): { stimulus: Float64Array; condition: Int32Array } {
  const n = d.stimulus.length;
  const stimulus = new Float64Array(n * times);
  const condition = new Int32Array(n * times);
  for (let r = 0; r < times; r++) {
    stimulus.set(d.stimulus, r * n);
    condition.set(d.condition, r * n);
  }
  return { stimulus, condition };
}

export function fitParticipant(study: ResolvedStudy, task: ParticipantTask): ParticipantLine {
  const data = toDataset(task.trials);
  const { fits, comparison } = fitDataset(study, data, task.crossValidate);
  const observed = data.response.map((r, t) => r - data.stimulus[t]);
  const digest = datasetDigest(data);
  const conditions = study.scenario.conditions.map((c) => c.name);
  const predictive = fits
    .filter((f) => f.status === 'ok')
    .flatMap((f) => {
      const model = study.candidates.find((c) => c.name === f.model)!;
      const values = { ...model.base };
      for (const p of f.parameters) values[p.name] = p.value;
      const rand = streamFromKey(`predictive/${digest}/${f.model}`);
      const { stimulus, condition } = repeated(data, PREDICTIVE_REPLICATES);
      const sim = simulateResponses(observerFromValues(model, values), stimulus, condition, rand);
      const simulated = sim.response.map((r, t) => r - stimulus[t]);
      const checks = [predictiveCheck(f.model, observed, simulated, PREDICTIVE_REPLICATES)];
      // Per condition too when there are several: pooling noise levels can hide a misfit in one of them.
      if (conditions.length > 1)
        conditions.forEach((name, c) => {
          const obs = observed.filter((_, t) => data.condition[t] === c);
          const sims = simulated.filter((_, t) => condition[t] === c);
          if (obs.length && sims.length) checks.push(predictiveCheck(f.model, obs, sims, PREDICTIVE_REPLICATES, name));
        });
      return checks;
    });
  return { key: task.key, participant: task.participant, trials: data.stimulus.length, status: 'ok', fits, comparison, predictive };
}

export function bootstrapReplicate(study: ResolvedStudy, task: BootstrapTask): BootstrapLine {
  const data = toDataset(task.trials);
  const model = study.candidates.find((c) => c.name === task.source)!;
  const rand = streamFromKey(`bootstrap/${datasetDigest(data)}/${task.source}/${task.replicate}`);
  const sim = simulateResponses(observerFromValues(model, task.values), data.stimulus, data.condition, rand);
  const { comparison } = fitDataset(study, sim);
  return {
    key: task.key,
    participant: task.participant,
    source: task.source,
    replicate: task.replicate,
    status: 'ok',
    comparisonStatus: comparison.status,
    winner: comparison.winner,
  };
}
