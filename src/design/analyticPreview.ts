/**
 * The analytic preview of one design: distinguishability of every pair of
 * candidate models (both directions), parameter identifiability from the
 * Fisher information, the predicted chance of choosing the right model by
 * trial count, and each generating model's predicted response mean and spread
 * per stimulus. No simulation: every number is a quadrature over the design
 * (expectationGrid.ts), so it takes seconds and has no Monte Carlo error.
 */
import type { Scenario } from '../scenario/schema.js';
import type { CandidateModel } from '../fit/candidate.js';
import { createDistribution } from '../observer/distributions/registry.js';
import { stimulusNodes, type StimulusNode } from './expectationGrid.js';
import { generatingGrid, minimumDivergence, pairLabel, ZERO_DIVERGENCE, type Divergence, type GeneratingGrid, type PairLabel } from './distinguishability.js';
import { fisherInformation, type FisherSummary } from './fisherInformation.js';
import { predictedCorrect, TRIAL_GRID, trialsToReach, type CriterionName } from './predictedAccuracy.js';
import type { DrawSpec } from '../scenario/schema.js';

export const PREVIEW_VERSION = 1;

export interface PairVerdict {
  a: string;
  b: string;
  /** D(a‖b) and D(b‖a) in nats per trial (null when that side does not generate). */
  klAB: number | null;
  klBA: number | null;
  label: PairLabel | null;
  text: string;
}

export interface ResponseMoment {
  model: string;
  condition: string;
  stimulus: number;
  mean: number;
  sd: number;
}

export interface AnalyticPreview {
  version: number;
  design: string;
  models: string[];
  generating: string[];
  /** Free parameters per model. */
  parameterCounts: Record<string, number>;
  /** Parameter values each generating model is evaluated at (centre of its draws). */
  typical: Record<string, Record<string, number>>;
  /** Rows: generating model; columns: candidate. Per-trial KL divergence minimised over the candidate's parameters (nats); null on the diagonal. */
  divergence: { rows: string[]; columns: string[]; kl: (number | null)[][]; variance: (number | null)[][]; closest: (Record<string, number> | null)[][] };
  pairs: PairVerdict[];
  fisher: (FisherSummary & { trials: number; se: (number | null)[]; freeSe: (number | null)[] })[];
  predicted: {
    criterion: CriterionName;
    target: number;
    method: string;
    curve: { trials: number; byModel: Record<string, number>; overall: number }[];
    trialsNeeded: Record<string, number | null>;
    /** Smallest count at which every generating model reaches the target; null when some never does. */
    trialsNeededAll: number | null;
    /** The same prediction at the trial counts asked for (e.g. a sweep's). */
    atTrials: { trials: number; byModel: Record<string, number> }[];
  };
  responseMoments: ResponseMoment[];
  statements: string[];
}

function centreOf(d: DrawSpec): number {
  if ('fixed' in d) return d.fixed;
  if ('uniform' in d) return 0.5 * (d.uniform[0] + d.uniform[1]);
  return Math.sqrt(d.logUniform[0] * d.logUniform[1]);
}

/** A generating model's typical parameters: its scenario values with each draw replaced by the draw's centre. */
export function typicalValues(s: Scenario, model: CandidateModel): Record<string, number> {
  const values = { ...model.base };
  const draws = { ...s.generate.parameters, ...(s.generate.perModel[model.name] ?? {}) };
  for (const [name, d] of Object.entries(draws)) if (name in values) values[name] = centreOf(d);
  return values;
}

export function designNodes(s: Scenario, perCondition = 16): StimulusNode[] {
  const list = s.trialList && typeof s.trialList !== 'string' ? s.trialList : undefined;
  const names = s.conditions.map((c) => c.name);
  const counts = names.map((n) => s.split?.[n] ?? 1);
  const total = counts.reduce((a, b) => a + b, 0);
  return stimulusNodes(
    createDistribution(s.stimulus ?? s.prior),
    s.conditions.length,
    perCondition,
    list ? { stimulus: list.stimulus, condition: list.condition.map((c) => names.indexOf(c)) } : undefined,
    counts.map((c) => c / total),
  );
}

const fmt = (x: number) => (x >= 0.01 ? x.toFixed(3) : x.toExponential(1));

function pairText(a: string, b: string, label: PairLabel | null, klAB: number | null, klBA: number | null, kA: number, kB: number): string {
  if (label === 'equivalent')
    return `${a} and ${b} predict the same responses under this design (divergence below 1e-5 nats per trial both ways): no number of trials can tell them apart. Change the design (a skewed stimulus distribution, noise that grows with the stimulus) rather than adding trials.`;
  if (label === 'nested') {
    // The inner model is the one the other reproduces; when each reproduces the other, the one with fewer parameters.
    const zeroAB = klAB !== null && klAB < ZERO_DIVERGENCE;
    const zeroBA = klBA !== null && klBA < ZERO_DIVERGENCE;
    const aInner = zeroAB && !zeroBA ? true : zeroBA && !zeroAB ? false : kA <= kB;
    const [inner, outer] = aInner ? [a, b] : [b, a];
    const back = inner === a ? klBA : klAB;
    return `${inner} is nested in ${outer} here: ${outer} reproduces ${inner}'s responses exactly, so data from ${inner} favour ${inner} only through the criterion's penalty on ${outer}'s extra parameter(s)${
      back !== null && back >= ZERO_DIVERGENCE ? `; data from ${outer} at its typical parameters differ from ${inner} by ${fmt(back)} nats per trial` : `; at the typical parameters ${outer} does not differ from ${inner} either, so its extra parameter is not identified by this design`
    }.`;
  }
  if (label === 'separable')
    return `${a} and ${b} are separable: ${[klAB !== null ? `${fmt(klAB)} nats per trial from ${a} to ${b}` : null, klBA !== null ? `${fmt(klBA)} from ${b} to ${a}` : null].filter(Boolean).join(', ')} (about ${Math.ceil(3 / Math.max(klAB ?? 0, klBA ?? 0))} trials give 3 nats of evidence on average).`;
  if (klAB !== null) return `${b} reproduces the responses of ${a} under this design; ${b} does not generate synthetic observers here, so the other direction is not computed.`;
  if (klBA !== null) return `${a} reproduces the responses of ${b} under this design; ${a} does not generate synthetic observers here, so the other direction is not computed.`;
  return `${a} and ${b}: neither generates synthetic observers here, so their distinguishability is not computed.`;
}

export function analyticPreview(s: Scenario, candidates: CandidateModel[], generating: string[], options: { target?: number; trials?: number; atTrials?: readonly number[] } = {}): AnalyticPreview {
  const target = options.target ?? 0.8;
  const nodes = designNodes(s);
  const names = candidates.map((c) => c.name);
  const k: Record<string, number> = {};
  for (const c of candidates) k[c.name] = c.free.length;
  const gens: GeneratingGrid[] = candidates.filter((c) => generating.includes(c.name)).map((c) => generatingGrid(c, typicalValues(s, c), nodes));
  const div = new Map<string, Divergence>();
  for (const g of gens) for (const c of candidates) if (c.name !== g.model.name) div.set(`${g.model.name}|${c.name}`, minimumDivergence(g, c, nodes));
  const rows = gens.map((g) => g.model.name);
  const kl = rows.map((r) => names.map((c) => div.get(`${r}|${c}`)?.kl ?? null));
  const variance = rows.map((r) => names.map((c) => div.get(`${r}|${c}`)?.variance ?? null));
  const closest = rows.map((r) => names.map((c) => div.get(`${r}|${c}`)?.closest ?? null));

  const pairs: PairVerdict[] = [];
  for (let a = 0; a < names.length; a++)
    for (let b = a + 1; b < names.length; b++) {
      const klAB = div.get(`${names[a]}|${names[b]}`)?.kl ?? null;
      const klBA = div.get(`${names[b]}|${names[a]}`)?.kl ?? null;
      // With one side not generating, the missing direction is unknown: label only what is known.
      const label = klAB !== null && klBA !== null ? pairLabel(klAB, klBA, k[names[a]], k[names[b]]) : (klAB ?? klBA ?? 0) >= ZERO_DIVERGENCE ? 'separable' : null;
      pairs.push({ a: names[a], b: names[b], klAB, klBA, label, text: pairText(names[a], names[b], label, klAB, klBA, k[names[a]], k[names[b]]) });
    }

  const trialsNow = options.trials ?? (Array.isArray(s.trials) ? Math.max(...s.trials) : s.trials);
  const fisher = gens.map((g) => {
    const f = fisherInformation(g, nodes);
    return { ...f, trials: trialsNow, se: f.perTrialSe.map((v) => (v === null ? null : v / Math.sqrt(trialsNow))), freeSe: f.perTrialFreeSe.map((v) => (v === null ? null : v / Math.sqrt(trialsNow))) };
  });

  const criterion = s.fitting.criterion as CriterionName;
  const predictAt = (n: number) => {
    const byModel: Record<string, number> = {};
    for (const g of rows) byModel[g] = predictedCorrect([...div.values()].filter((d) => d.generating === g), k, g, n, criterion);
    return byModel;
  };
  const curve = TRIAL_GRID.map((n) => {
    const byModel = predictAt(n);
    const overall = rows.reduce((acc, g) => acc + byModel[g], 0) / rows.length;
    return { trials: n, byModel, overall };
  });
  const trialsNeeded: Record<string, number | null> = {};
  for (const g of rows) trialsNeeded[g] = trialsToReach(curve.map((c) => ({ trials: c.trials, p: c.byModel[g] })), target);
  const trialsNeededAll = trialsToReach(curve.map((c) => ({ trials: c.trials, p: Math.min(...rows.map((g) => c.byModel[g])) })), target);

  const responseMoments: ResponseMoment[] = [];
  for (const g of gens) {
    const acc = nodes.map(() => ({ w: 0, m: 0, m2: 0 }));
    const gr = g.grid;
    for (let i = 0; i < gr.weight.length; i++) {
      const a = acc[gr.node[i]];
      a.w += gr.weight[i];
      a.m += gr.weight[i] * gr.response[i];
      a.m2 += gr.weight[i] * gr.response[i] * gr.response[i];
    }
    nodes.forEach((nd, i) => {
      const mean = acc[i].m / acc[i].w;
      responseMoments.push({ model: g.model.name, condition: s.conditions[nd.condition].name, stimulus: nd.x, mean, sd: Math.sqrt(Math.max(0, acc[i].m2 / acc[i].w - mean * mean)) });
    });
  }

  const statements: string[] = [];
  const equivalent = pairs.filter((p) => p.label === 'equivalent');
  if (equivalent.length) statements.push(`The loss is not identifiable under this design between ${equivalent.map((p) => `${p.a} and ${p.b}`).join('; ')}: these models predict the same responses, so no trial count separates them.`);
  for (const p of pairs) statements.push(p.text);
  for (const f of fisher) {
    if (f.nearSingular) statements.push(`Model ${f.model}: the information matrix is near singular (eigenvalue ratio ${f.conditionRatio.toExponential(1)}); some combination of its parameters is barely informed by this design.`);
    f.correlation?.forEach((row, i) =>
      row.forEach((r, j) => {
        if (j > i && r !== null && Math.abs(r) > 0.5)
          statements.push(`Model ${f.model}: estimates of ${f.parameters[i]} and ${f.parameters[j]} are predicted to correlate at ${r.toFixed(2)} (${Math.abs(r) > 0.8 ? 'a strong' : 'a moderate'} trade-off).`);
      }),
    );
  }
  statements.push(
    trialsNeededAll !== null
      ? `Predicted: every generating model is chosen in at least ${Math.round(100 * target)}% of datasets from about ${trialsNeededAll} trials per observer (normal approximation; check with 'lossprobe size').`
      : `Predicted: not every generating model reaches ${Math.round(100 * target)}% correct choices within ${TRIAL_GRID[TRIAL_GRID.length - 1]} trials under this design.`,
  );

  return {
    version: PREVIEW_VERSION,
    design: s.name,
    models: names,
    generating: rows,
    parameterCounts: k,
    typical: Object.fromEntries(gens.map((g) => [g.model.name, g.values])),
    divergence: { rows, columns: names, kl, variance, closest },
    pairs,
    fisher,
    predicted: {
      criterion,
      target,
      method: 'normal approximation of the per-trial log-likelihood ratio at the pseudo-true parameters, with the fitting bias k/2 and the criterion penalty; chi-square (Wilks) where a rival reproduces the generating model exactly; rivals treated as independent',
      curve,
      trialsNeeded,
      trialsNeededAll,
      atTrials: (options.atTrials ?? []).map((n) => ({ trials: n, byModel: predictAt(n) })),
    },
    responseMoments,
    statements,
  };
}
