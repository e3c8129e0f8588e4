/**
 * A methods paragraph to paste into a preregistration, grant or paper:
 * design, models, parameter draws, synthetic observers, fitting, criterion,
 * results with intervals, seed, scenario hash and versions. Generated from
 * scenario.json and summary.json only; where the design cannot separate
 * models it says so in the results, not in a footnote.
 */
import type { Section } from '../section.js';
import type { DataPath, ReportContext } from '../context.js';
import { lookup } from '../context.js';
import { focusOf } from '../focus.js';
import { listNames, rowSentence, separationStatement } from '../sentences.js';
import { trialCountsOf } from '../data.js';
import type { Scenario } from '../../../scenario/schema.js';

const SC: DataPath = ['scenario', 'scenario'];

const FAMILY_WORDS: Record<string, string> = {
  gaussian: 'a Gaussian distribution',
  'log-normal': 'a log-normal distribution',
  gamma: 'a gamma distribution',
  uniform: 'a uniform distribution',
  'gaussian-mixture': 'a mixture of Gaussian distributions (components as listed in scenario.json)',
};

const NOISE_WORDS: Record<string, string> = {
  constant: 'Gaussian sensory noise of constant standard deviation',
  scalar: 'Gaussian sensory noise growing in proportion to the stimulus (Weber fraction)',
  generalized: 'Gaussian sensory noise with a constant and a proportional part',
  'log-gaussian': 'Gaussian sensory noise on the logarithm of the stimulus',
};

const LOSS_WORDS: Record<string, string> = {
  squared: 'squared-error loss, whose Bayes estimate is the posterior mean',
  absolute: 'absolute-error loss, whose Bayes estimate is the posterior median',
  'hit-or-miss': 'hit-or-miss loss, whose Bayes estimate is the centre of the window of highest posterior mass',
  power: 'power loss, the error raised to an exponent',
  'asymmetric-linear': 'asymmetric linear loss, whose Bayes estimate is the posterior quantile set by its level',
  'inverted-gaussian': 'bounded inverted-Gaussian loss',
};

const CRITERION_WORDS: Record<string, string> = {
  aic: 'the lowest Akaike information criterion (AIC)',
  aicc: 'the lowest small-sample corrected Akaike information criterion (AICc)',
  bic: 'the lowest Bayesian information criterion (BIC)',
  cv: 'the highest cross-validated log-likelihood',
};

/** "shape 2, scale 9" for the numeric fields of a family object at `path`. */
/** What the design sentences read: a scenario record embedded at ['scenario']. */
type WithScenario = { scenario: { scenario: Scenario } };

function params<D>(ctx: ReportContext<D>, path: DataPath): string {
  const obj = lookup(ctx.embedded, path) as Record<string, unknown>;
  return Object.entries(obj)
    .filter(([k, v]) => k !== 'family' && typeof v === 'number')
    .map(([k]) => `${k} ${ctx.num([...path, k], 'value')}`)
    .join(', ');
}

function family<D>(ctx: ReportContext<D>, path: DataPath, words: Record<string, string>): string {
  const obj = lookup(ctx.embedded, path) as { family: string };
  const p = params(ctx, path);
  return `${words[obj.family] ?? ctx.name(obj.family)}${p ? ` (${p})` : ''}`;
}

/** Names grouped by equal keys, groups in order of first appearance. */
function groupBy(names: string[], keys: string[]): string[][] {
  const groups = new Map<string, string[]>();
  names.forEach((n, i) => groups.set(keys[i], [...(groups.get(keys[i]) ?? []), n]));
  return [...groups.values()];
}

function draw(ctx: ReportContext, path: DataPath): string {
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

function models(ctx: ReportContext): string {
  const s = ctx.data.scenario.scenario;
  const list = s.models.map((m, i) => `${ctx.name(m.name)} (${LOSS_WORDS[m.loss.family] ?? ctx.name(m.loss.family)}${params(ctx, [...SC, 'models', i, 'loss']) ? `, ${params(ctx, [...SC, 'models', i, 'loss'])}` : ''})`);
  // The free parameters as fitted (from the job lines), else as the scenario states them.
  const freeOf = (m: (typeof s.models)[number]): string[] | null => {
    for (const l of ctx.data.lines) {
      const fit = l.fits?.find((x) => x.model === m.name && x.status === 'ok');
      if (fit) return fit.parameters.map((p) => p.name);
    }
    return m.free ?? null;
  };
  const frees = s.models.map(freeOf);
  const sameFree = frees.every((f) => JSON.stringify(f) === JSON.stringify(frees[0]));
  const describe = (f: string[] | null) => (f ? (f.length ? listNames(ctx, f) : 'none') : 'its loss parameters, every sensory-noise parameter, the motor noise and the lapse rate');
  const freeText = sameFree
    ? `Each model's free parameters were ${describe(frees[0])}.`
    : `Free parameters: ${groupBy(s.models.map((m) => m.name), frees.map((f) => JSON.stringify(f)))
        .map((names) => `${listNames(ctx, names)}: ${describe(frees[s.models.findIndex((m) => m.name === names[0])])}`)
        .join('; ')}.`;
  const gen = ctx.data.summary.generating;
  const obs = ctx.num([...SC, 'generate', 'observers'], 'count');
  const counts = trialCountsOf(ctx.data.summary);
  const datasets = counts.length > 1 ? `${ctx.num(['summary', 'overall', 'jobs'], 'count')} datasets over all trial counts` : `${ctx.num(['summary', 'overall', 'jobs'], 'count')} datasets in all`;
  const draws: string[] = Object.keys(s.generate.parameters).map((n) => `${ctx.name(n)} ${draw(ctx, [...SC, 'generate', 'parameters', n])}`);
  for (const [m, d] of Object.entries(s.generate.perModel)) for (const n of Object.keys(d)) draws.push(`${ctx.name(n)} ${draw(ctx, [...SC, 'generate', 'perModel', m, n])} for ${ctx.name(m)}`);
  const drawText = draws.length
    ? `True parameter values were drawn independently for each synthetic observer: ${draws.join('; ')}; all other parameters were fixed at the scenario values above.`
    : 'All true parameter values were fixed at the scenario values above.';
  return `The candidate models were ${list.join('; ')}. ${freeText} Synthetic observers were generated by ${gen.length === s.models.length ? 'every candidate' : listNames(ctx, gen)}, ${obs} per generating model (${datasets}). ${drawText}`;
}

function fitting(ctx: ReportContext): string {
  const f = ctx.data.scenario.scenario.fitting;
  const fp = [...SC, 'fitting'];
  const crit = f.criterion === 'cv' ? `${CRITERION_WORDS.cv} over ${ctx.num([...fp, 'folds'], 'count')} folds` : CRITERION_WORDS[f.criterion];
  const margin = f.margin > 0 ? `, or whose best models differed by less than ${ctx.num([...fp, 'margin'], 'value')} in the criterion,` : '';
  return `Every candidate was fitted to every dataset by maximum likelihood, the response density including sensory noise, motor noise and lapses. Each fit started from ${ctx.num([...fp, 'starts'], 'count')} seeded starting point${f.starts === 1 ? '' : 's'} (a Latin hypercube seeded by the dataset, never by the true values), searched with BFGS and a Nelder–Mead fallback, and kept the best; standard errors came from a numerical Hessian. On each dataset the model with ${crit} was chosen. Datasets whose best models were tied in log-likelihood${margin} counted as undecided, and datasets with a failed fit as failures; neither was credited to any model.`;
}

function results(ctx: ReportContext): string {
  const f = focusOf(ctx);
  const a = [...f.path, 'accuracy'];
  const parts: string[] = [];
  parts.push(
    `${f.phrase === 'over all datasets' ? 'Over all datasets' : f.phrase.charAt(0).toUpperCase() + f.phrase.slice(1)}, the generating model was chosen in ${ctx.num([...a, 'estimate'], 'percent')} of ${ctx.num([...a, 'n'], 'count')} datasets (95% Wilson interval ${ctx.num([...a, 'lower'], 'percent')} to ${ctx.num([...a, 'upper'], 'percent')}; chance ${ctx.num([...f.path, 'chance'], 'percent')}).`,
  );
  const counts = trialCountsOf(ctx.data.summary);
  if (ctx.data.summary.byTrials && counts.length > 1) {
    const per = counts.map((t) => {
      const b = ['summary', 'byTrials', String(t), 'accuracy'];
      return `${ctx.num([...b, 'estimate'], 'percent')} (${ctx.num([...b, 'lower'], 'percent')} to ${ctx.num([...b, 'upper'], 'percent')}) at ${ctx.num(['summary', 'byTrials', String(t), 'trials', 0], 'count')}`;
    });
    parts.push(`Across the sweep the share was ${per.join(', ')} trials.`);
  }
  const clause = (i: number) => {
    const r = rowSentence(ctx, f, i);
    const verb = r.rest.startsWith('failed') ? 'it ' : r.rest.startsWith('no datasets') ? 'there were ' : 'it was ';
    return `For ${r.name}, ${verb}${r.rest}.`;
  };
  parts.push(f.summary.confusion.rows.map((_, i) => clause(i)).join(' '));
  parts.push(separationStatement(ctx, f));
  const rec = f.summary.recovery
    .map((m, i) => {
      // A parameter whose true value never varies has no correlation to report.
      const ps = m.parameters.map((p, k) => ((p.n ?? 0) > 0 && p.pearson !== null ? `${ctx.name(p.name)} ${ctx.num([...f.path, 'recovery', i, 'parameters', k, 'pearson'], 'correlation')}` : '')).filter(Boolean);
      return ps.length ? `${ctx.name(m.generating)}: ${ps.join(', ')}` : '';
    })
    .filter(Boolean);
  if (rec.length) parts.push(`Correlations between true and fitted parameters of each generating model's own fit were ${rec.join('; ')}.`);
  return parts.join(' ');
}

function reproduce(ctx: ReportContext): string {
  return `The study was run with lossprobe ${ctx.text(['summary', 'provenance', 'toolVersion'])} on Node.js ${ctx.text(['summary', 'provenance', 'node'])}, master seed ${ctx.num(['summary', 'seed'], 'id')}; the resolved scenario has SHA-256 hash <code class="hash">${ctx.text(['summary', 'provenance', 'scenarioHash'])}</code>. The same seed and scenario give the same datasets and fits whatever the number of workers.`;
}

export const methods: Section = {
  id: 'methods',
  title: 'Methods paragraph',
  applies: () => true,
  render(ctx) {
    const crit = ctx.data.summary.criterion.toUpperCase();
    return `<p class="how">Generated from the scenario and the results; edit freely. Every number below is also in <code>summary.json</code> or <code>scenario.json</code>.</p>
<div class="methods" id="methods-text" data-criterion="${crit}">
<p>${design(ctx)}</p>
<p>${models(ctx)}</p>
<p>${fitting(ctx)}</p>
<p>${results(ctx)}</p>
<p>${reproduce(ctx)}</p>
</div>`;
  },
};
