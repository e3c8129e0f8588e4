/**
 * From a scenario with a `plan` section to the recovery study that fills the
 * participant pool: the population's models generate `plan.pool` synthetic
 * observers each, at every trial count of the plan's grid (nested prefixes).
 * Only what changes the pool's job lines enters the pool study (and so its
 * hash): the plan's participant grid, target, resamples, analysis and costs
 * are read afterwards, so changing them reuses a finished pool (--resume).
 */
import { UserError } from '../cli/userError.js';
import type { PlanSpec } from '../scenario/planSchema.js';
import { scenarioSchema, type Scenario } from '../scenario/schema.js';
import { loadStudy, resolveStudy, type ResolvedStudy } from './resolve.js';

export interface PlanStudy {
  /** The recovery study whose jobs are the pool. */
  pool: ResolvedStudy;
  plan: PlanSpec;
  /** The population model with the largest share: the correct group conclusion. */
  majority: string;
  source: string;
}

export interface PlanOverrides {
  seed?: number;
  participants?: number[];
  trials?: number[];
  pool?: number;
  resamples?: number;
  poolReplicates?: number;
}

export function poolScenario(s: Scenario, plan: PlanSpec): Scenario {
  const { plan: _omit, ...rest } = s;
  const order = s.models.map((m) => m.name);
  return {
    ...rest,
    trials: plan.trials ?? s.trials,
    generate: {
      ...s.generate,
      models: order.filter((m) => (plan.population[m] ?? 0) > 0),
      observers: plan.pool,
    },
  };
}

export function loadPlan(file: string, o: PlanOverrides = {}): PlanStudy {
  const full = loadStudy(file, { seed: o.seed });
  const s = full.scenario;
  if (!s.plan)
    throw new UserError(
      `${file} has no 'plan' section; add one, e.g.\n  plan:\n    participants: [10, 20, 40]\n    trials: [120, 240]\n    population: { ${s.models[0].name}: 0.7, ${s.models[s.models.length > 1 ? 1 : 0].name}: 0.3 }`,
    );
  const plan: PlanSpec = {
    ...s.plan,
    ...(o.participants ? { participants: o.participants } : {}),
    ...(o.trials ? { trials: o.trials } : {}),
    ...(o.pool !== undefined ? { pool: o.pool } : {}),
    ...(o.resamples !== undefined ? { resamples: o.resamples } : {}),
    ...(o.poolReplicates !== undefined ? { poolReplicates: o.poolReplicates } : {}),
  };
  if (plan.poolReplicates === 1) throw new UserError('--pool-replicates expects 0 (off) or at least 2');
  plan.participants = [...new Set(plan.participants)].sort((a, b) => a - b);
  // Parsed again so its keys come in the schema's order: the hash must be the one a merge recomputes from scenario.json.
  const pool = resolveStudy(scenarioSchema.parse(poolScenario(s, plan)), file);
  const majority = Object.entries(plan.population).reduce((a, b) => (b[1] > a[1] ? b : a))[0];
  return { pool, plan, majority, source: file };
}
