/**
 * The scenario in words, for the methods paragraph and the preview page:
 * distribution, noise and loss families described plainly, their numbers
 * traceable (ctx.num on the embedded scenario record), and the design as
 * sentences.
 */
import type { DataPath, ReportContext } from './context.js';
import { lookup } from './context.js';
import type { Scenario } from '../../scenario/schema.js';

export const SC: DataPath = ['scenario', 'scenario'];

export const FAMILY_WORDS: Record<string, string> = {
  gaussian: 'a Gaussian distribution',
  'log-normal': 'a log-normal distribution',
  gamma: 'a gamma distribution',
  uniform: 'a uniform distribution',
  'gaussian-mixture': 'a mixture of Gaussian distributions (components as listed in scenario.json)',
};

export const NOISE_WORDS: Record<string, string> = {
  constant: 'Gaussian sensory noise of constant standard deviation',
  scalar: 'Gaussian sensory noise growing in proportion to the stimulus (Weber fraction)',
  generalized: 'Gaussian sensory noise with a constant and a proportional part',
  'log-gaussian': 'Gaussian sensory noise on the logarithm of the stimulus',
};

export const LOSS_WORDS: Record<string, string> = {
  squared: 'squared-error loss, whose Bayes estimate is the posterior mean',
  absolute: 'absolute-error loss, whose Bayes estimate is the posterior median',
  'hit-or-miss': 'hit-or-miss loss, whose Bayes estimate is the centre of the window of highest posterior mass',
  power: 'power loss, the error raised to an exponent',
  'asymmetric-linear': 'asymmetric linear loss, whose Bayes estimate is the posterior quantile set by its level',
  'inverted-gaussian': 'bounded inverted-Gaussian loss',
};

/** What the design sentences read: a scenario record embedded at ['scenario']. */
export type WithScenario = { scenario: { scenario: Scenario } };

/** "shape 2, scale 9" for the numeric fields of a family object at `path`. */
export function params<D>(ctx: ReportContext<D>, path: DataPath): string {
  const obj = lookup(ctx.embedded, path) as Record<string, unknown>;
  return Object.entries(obj)
    .filter(([k, v]) => k !== 'family' && typeof v === 'number')
    .map(([k]) => `${ctx.name(k)} ${ctx.num([...path, k], 'value')}`)
    .join(', ');
}

export function family<D>(ctx: ReportContext<D>, path: DataPath, words: Record<string, string>): string {
  const obj = lookup(ctx.embedded, path) as { family: string };
  const p = params(ctx, path);
  return `${words[obj.family] ?? ctx.name(obj.family)}${p ? ` (${p})` : ''}`;
}

export function draw<D>(ctx: ReportContext<D>, path: DataPath): string {
  const d = lookup(ctx.embedded, path) as Record<string, unknown>;
  if ('fixed' in d) return `fixed at ${ctx.num([...path, 'fixed'], 'value')}`;
  const kind = 'uniform' in d ? 'uniform' : 'logUniform';
  return `${kind === 'uniform' ? 'uniform' : 'log-uniform'} on [${ctx.num([...path, kind, 0], 'value')}, ${ctx.num([...path, kind, 1], 'value')}]`;
}

/** The design in sentences: stimuli, prior, conditions, response stage and (for studies) trials. */
export function design<D extends WithScenario>(ctx: ReportContext<D>, withTrials = true): string {
  const s = ctx.data.scenario.scenario;
  const parts: string[] = [];
  const priorText = family(ctx, [...SC, 'prior'], FAMILY_WORDS);
  if (s.trialList) parts.push(`Stimuli were taken from an explicit trial list (in scenario.json); the observer's prior was ${priorText}.`);
  else if (s.stimulus) parts.push(`Stimuli were drawn from ${family(ctx, [...SC, 'stimulus'], FAMILY_WORDS)}; the observer's prior was ${priorText}.`);
  else parts.push(`Stimuli were drawn from ${priorText}, which was also the observer's prior.`);
  const conds = s.conditions.map((c, i) => `${ctx.name(c.name)}, with ${family(ctx, [...SC, 'conditions', i, 'noise'], NOISE_WORDS)}`);
  parts.push(s.conditions.length === 1 ? `There was one condition: ${conds[0]}.` : `There were ${s.conditions.length === 2 ? 'two' : s.conditions.length === 3 ? 'three' : 'several'} conditions: ${conds.join('; ')}.`);
  const r = [...SC, 'response'];
  const ends = s.response.ends === 'censor' ? 'responses beyond an end were recorded at that end' : 'responses were not clipped at the ends';
  parts.push(
    `Responses were given on a scale from ${ctx.num([...r, 'lower'], 'value')} to ${ctx.num([...r, 'upper'], 'value')} (${ends}), with Gaussian motor noise (standard deviation ${ctx.num([...r, 'motorSd'], 'value')}) and a lapse rate of ${ctx.num([...r, 'lapseRate'], 'percent')} (lapses uniform over the scale)${s.response.motorAware ? '; the observer allowed for its own motor noise' : ''}.`,
  );
  if (!withTrials) return parts.join(' ');
  if (Array.isArray(s.trials)) {
    const counts = s.trials.map((_, i) => ctx.num([...SC, 'trials', i], 'count'));
    const list = `${counts.slice(0, -1).join(', ')} and ${counts[counts.length - 1]}`;
    parts.push(`Each synthetic observer was analysed at ${list} trials, the smaller counts being the first trials of one sequence, split evenly across conditions.`);
  } else parts.push(`Each synthetic observer completed ${ctx.num([...SC, 'trials'], 'count')} trials, split evenly across conditions.`);
  return parts.join(' ');
}

