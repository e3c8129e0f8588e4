/**
 * The optional `plan` section of a scenario: how to size a study's
 * participants × trials for its planned group analysis (`lossprobe plan`).
 * Cross-field rules that need the rest of the scenario (model names,
 * the fitting criterion) are checked by the scenario schema's refinement.
 */
import { z } from 'zod';

const counts = (min: number, what: string) =>
  z
    .array(z.number().int().min(min).max(100_000))
    .min(1)
    .describe(`${what}, e.g. [10, 20, 40]`);

const randomEffectsSchema = z.strictObject({
  method: z.literal('random-effects'),
  evidence: z
    .enum(['bic', 'aic', 'cv'])
    .default('bic')
    .describe("each participant's log-evidence per model: −BIC/2, −AIC/2 or the cross-validated log-likelihood (cv needs fitting.criterion: cv)"),
  rule: z
    .enum(['protected-exceedance', 'exceedance'])
    .default('protected-exceedance')
    .describe('the group conclusion is correct when the true majority model has this probability above the threshold'),
  threshold: z.number().gt(0).lt(1).default(0.95),
});

const winnerCountSchema = z.strictObject({
  method: z.literal('winner-count'),
  minimumShare: z
    .number()
    .min(0)
    .lt(1)
    .default(0)
    .describe('the true majority model must win more participants than any other model and more than this share of all participants'),
});

export const planSchema = z.strictObject({
  participants: counts(2, 'numbers of participants to try'),
  trials: counts(10, 'trials per participant to try (default: the scenario\'s trials)').optional(),
  population: z
    .record(z.string(), z.number().min(0).max(1))
    .describe('share of each loss model in the population, e.g. {squared: 0.7, absolute: 0.3}; shares sum to 1'),
  pool: z
    .number()
    .int()
    .min(2)
    .max(100_000)
    .default(30)
    .describe('simulated participants per population model whose fits are resampled into studies'),
  analysis: z.discriminatedUnion('method', [randomEffectsSchema, winnerCountSchema]).prefault({ method: 'random-effects' }),
  target: z.number().gt(0).lt(1).default(0.8).describe('wanted probability of the correct group conclusion'),
  resamples: z.number().int().min(20).max(1_000_000).default(1000).describe('simulated studies per (participants, trials) cell'),
  poolReplicates: z
    .number()
    .int()
    .min(0)
    .max(1000)
    .default(20)
    .refine((b) => b !== 1, { message: 'use 0 (off) or at least 2 replicates' })
    .describe("bootstrap replicates of the pool, for intervals that also count the pool's own sampling error (0: off; costs about as much again as the resamples)"),
  cost: z
    .strictObject({
      participant: z.number().min(0).default(0).describe('cost of one participant regardless of trials (recruitment, set-up)'),
      trial: z.number().min(0).default(0).describe('cost of one trial of one participant'),
    })
    .optional(),
});

export type PlanSpec = z.infer<typeof planSchema>;
export type GroupAnalysisSpec = PlanSpec['analysis'];

/** Problems of a plan section that need the rest of the scenario; [path, message] pairs. */
export function planProblems(plan: PlanSpec, models: readonly string[], criterion: string): [(string | number)[], string][] {
  const out: [(string | number)[], string][] = [];
  const entries = Object.entries(plan.population);
  for (const [name] of entries) if (!models.includes(name)) out.push([['population', name], `'${name}' is not one of the models (${models.join(', ')})`]);
  const total = entries.reduce((s, [, p]) => s + p, 0);
  if (entries.length === 0 || Math.abs(total - 1) > 1e-6) out.push([['population'], `the shares must sum to 1 (they sum to ${+total.toFixed(6)})`]);
  const top = Math.max(...entries.map(([, p]) => p));
  if (entries.filter(([, p]) => p === top).length > 1)
    out.push([['population'], 'one model must have the largest share (the true majority model the group analysis should find); two or more share the top']);
  if (plan.analysis.method === 'random-effects' && plan.analysis.evidence === 'cv' && criterion !== 'cv')
    out.push([['analysis', 'evidence'], 'cross-validated evidence needs fitting.criterion: cv (the pool fits compute it only then)']);
  return out;
}
