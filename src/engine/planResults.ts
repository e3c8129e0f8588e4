/**
 * From a plan's finished pool to everything the plan reports: the pool of
 * participants, P(correct) over the grid (resampled on workers), the design
 * choice and the diagnostics. Output formats live in report/planSummary.ts.
 */
import { availableParallelism } from 'node:os';
import type { JobLine } from '../analysis/types.js';
import type { GroupAnalysis } from '../analysis/groupConclusion.js';
import { chooseDesign, type DesignChoice } from '../analysis/planChoice.js';
import { evidenceTies, poolUse, type PoolUse, type TiedPair } from '../analysis/planDiagnostics.js';
import type { GridCell } from '../analysis/planGrid.js';
import { buildPool, type PlanPool } from '../analysis/planPool.js';
import { UserError } from '../cli/userError.js';
import type { PlanSpec } from '../scenario/planSchema.js';
import type { PlanStudy } from './planStudy.js';
import { resampleOnWorkers } from './resampleStudies.js';

export interface PlanResults {
  name: string;
  seed: number;
  scenarioHash: string;
  toolVersion: string;
  plan: PlanSpec;
  majority: string;
  pool: PlanPool;
  /** Simulated participants per population model (before exclusions). */
  poolSize: number;
  cells: GridCell[];
  choice: DesignChoice;
  ties: TiedPair[];
  poolUse: PoolUse[];
}

function analysisOf(plan: PlanSpec): GroupAnalysis {
  const a = plan.analysis;
  return a.method === 'random-effects' ? { method: a.method, rule: a.rule, threshold: a.threshold } : { method: a.method, minimumShare: a.minimumShare };
}

export async function planResults(p: PlanStudy, lines: readonly JobLine[], o: { workers?: number; toolVersion: string; folder: string }): Promise<PlanResults> {
  const s = p.pool.scenario;
  const candidates = p.pool.candidates.map((c) => c.name);
  // Winner counts need no evidence; the evidence rows then only serve the tied-evidence check.
  const evidence = p.plan.analysis.method === 'random-effects' ? p.plan.analysis.evidence : s.fitting.criterion === 'cv' ? 'cv' : 'bic';
  const pool = buildPool(lines, { candidates, generating: p.pool.generating, trials: p.pool.trialCounts, evidence, criterion: s.fitting.criterion, margin: s.fitting.margin });
  const empty = p.pool.generating.filter((g) => pool.byModel[g].length === 0);
  if (empty.length) throw new UserError(`every simulated participant of ${empty.join(', ')} had a failed fit, so the pool holds none to resample; see ${o.folder}/jobs.jsonl`);
  const grid = { participants: p.plan.participants, population: p.plan.population, majority: p.majority, analysis: analysisOf(p.plan), resamples: p.plan.resamples, poolReplicates: p.plan.poolReplicates };
  const cells = await resampleOnWorkers(pool, grid, `lossprobe-plan/${s.seed}`, o.workers ?? availableParallelism());
  return {
    name: s.name,
    seed: s.seed,
    scenarioHash: p.pool.hash,
    toolVersion: o.toolVersion,
    plan: p.plan,
    majority: p.majority,
    pool,
    poolSize: s.generate.observers,
    cells,
    choice: chooseDesign(cells, p.plan.target, p.plan.cost),
    ties: evidenceTies(pool, p.majority),
    poolUse: poolUse(pool, p.plan.population, p.plan.participants),
  };
}
