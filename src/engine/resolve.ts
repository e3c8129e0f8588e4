/**
 * From a scenario file to a resolved study: validated scenario, candidate
 * models with their free parameters and bounds, generating models, and the
 * checks no single schema field can make (parameter names in draws,
 * observer validity at the scenario's own values).
 */
import { createHash } from 'node:crypto';
import { readScenario } from '../scenario/variants.js';
import type { Scenario } from '../scenario/schema.js';
import { defineCandidate, observerFromValues, type CandidateModel } from '../fit/candidate.js';
import { observerProblems } from '../observer/observer.js';
import { createDistribution } from '../observer/distributions/registry.js';
import { UserError } from '../cli/userError.js';

export interface ResolvedStudy {
  scenario: Scenario;
  candidates: CandidateModel[];
  generating: string[];
  trialCounts: number[];
  /** sha256 of the resolved scenario JSON: shards and resumes must match it. */
  hash: string;
}

export function candidatesOf(s: Scenario, source: string): CandidateModel[] {
  return s.models.map((m, i) => {
    try {
      return defineCandidate({
        name: m.name,
        loss: m.loss,
        prior: s.prior,
        conditions: s.conditions,
        scale: { lower: s.response.lower, upper: s.response.upper, ends: s.response.ends },
        motorSd: s.response.motorSd,
        lapseRate: s.response.lapseRate,
        motorAware: s.response.motorAware,
        free: m.free,
        bounds: m.bounds,
      });
    } catch (e) {
      throw new UserError(`${source}: models.${i}: ${(e as Error).message}`);
    }
  });
}

export function resolveStudy(s: Scenario, source: string): ResolvedStudy {
  const candidates = candidatesOf(s, source);
  const generating = s.generate.models ?? s.models.map((m) => m.name);
  const problems: string[] = [];
  const stimulus = createDistribution(s.stimulus ?? s.prior);
  const stimulusSupport: readonly [number, number] =
    s.trialList && typeof s.trialList !== 'string'
      ? [s.trialList.stimulus.reduce((a, b) => Math.min(a, b), Infinity), s.trialList.stimulus.reduce((a, b) => Math.max(a, b), -Infinity)]
      : stimulus.support;
  for (const c of candidates) {
    for (const p of observerProblems(observerFromValues(c, c.base), stimulusSupport)) problems.push(`model '${c.name}': ${p}`);
    for (const f of c.free) {
      const v = c.base[f.name];
      if (!(f.lower < f.upper)) problems.push(`model '${c.name}': bounds of ${f.name} must have lower < upper`);
      else if (!(v >= f.lower && v <= f.upper)) problems.push(`model '${c.name}': ${f.name} = ${v} lies outside its fitting bounds [${f.lower}, ${f.upper}]`);
    }
  }
  const gen = candidates.filter((c) => generating.includes(c.name));
  for (const name of Object.keys(s.generate.parameters)) {
    if (!gen.some((c) => name in c.base))
      problems.push(`generate.parameters.${name}: no generating model has a parameter of that name (known: ${[...new Set(gen.flatMap((c) => Object.keys(c.base)))].join(', ')})`);
  }
  for (const [model, draws] of Object.entries(s.generate.perModel)) {
    const c = candidates.find((m) => m.name === model)!;
    for (const name of Object.keys(draws)) if (!(name in c.base)) problems.push(`generate.perModel.${model}.${name}: model '${model}' has no such parameter (known: ${Object.keys(c.base).join(', ')})`);
  }
  for (const c of gen) {
    const draws = { ...s.generate.parameters, ...(s.generate.perModel[c.name] ?? {}) };
    for (const [name, d] of Object.entries(draws)) {
      const f = c.free.find((p) => p.name === name);
      if (!f) continue;
      const [lo, hi] = 'fixed' in d ? [d.fixed, d.fixed] : 'uniform' in d ? d.uniform : d.logUniform;
      if (lo < f.lower || hi > f.upper)
        problems.push(`generate: true values of ${name} for model '${c.name}' range over [${lo}, ${hi}], outside its fitting bounds [${f.lower}, ${f.upper}] (widen the bounds or narrow the draw)`);
    }
  }
  if (problems.length) throw new UserError(`${source} has ${problems.length} problem${problems.length > 1 ? 's' : ''}:\n${problems.map((p) => `  - ${p}`).join('\n')}`);
  const trialCounts = [...new Set(Array.isArray(s.trials) ? s.trials : [s.trials])].sort((a, b) => a - b);
  const hash = createHash('sha256').update(JSON.stringify(s)).digest('hex');
  return { scenario: s, candidates, generating, trialCounts, hash };
}

export function loadStudy(file: string, overrides: { observers?: number; trials?: number[]; seed?: number } = {}): ResolvedStudy {
  return resolveStudy(applyOverrides(readScenario(file), overrides), file);
}

/** Command-line overrides of a scenario's observers, trials and seed. */
export function applyOverrides(s: Scenario, overrides: { observers?: number; trials?: number[]; seed?: number }): Scenario {
  if (overrides.observers !== undefined) s.generate.observers = overrides.observers;
  if (overrides.trials !== undefined) s.trials = overrides.trials.length === 1 ? overrides.trials[0] : overrides.trials;
  if (overrides.seed !== undefined) s.seed = overrides.seed;
  return s;
}
