/**
 * The scenario schema: one source of truth for the types of a study and for
 * the messages users see when a file is wrong. A scenario describes the
 * observer side (prior, conditions, response stage), the candidate models,
 * and, for recovery studies, the design (stimuli, trials), which models
 * generate synthetic observers and how their parameters are drawn, the
 * fitting settings and the seed.
 */
import { z } from 'zod';
import { distributionSchema } from '../observer/distributions/registry.js';
import { conditionSchema, modelSchema as previewModelSchema, responseSchema } from './previewSchema.js';
import { planProblems, planSchema } from './planSchema.js';

const pair = z.tuple([z.number(), z.number()]).refine((p) => p[1] >= p[0], { message: 'the second number must be at least the first' });

export const drawSchema = z.union([
  z.strictObject({ fixed: z.number() }),
  z.strictObject({ uniform: pair.describe('[lower, upper]') }),
  z.strictObject({ logUniform: pair.refine((p) => p[0] > 0, { message: 'log-uniform bounds must be positive' }).describe('[lower, upper], both > 0') }),
]);
export type DrawSpec = z.infer<typeof drawSchema>;

export const modelSchema = previewModelSchema.extend({
  free: z.array(z.string()).optional().describe('names of free parameters (default: loss parameters, every noise parameter, motorSd, lapseRate)'),
  bounds: z.record(z.string(), z.strictObject({ lower: z.number(), upper: z.number() })).optional(),
});

const trialsSchema = z.union([z.number().int().min(10), z.array(z.number().int().min(10)).min(1)]);

const trialListSchema = z
  .union([
    z.string().min(1).describe('CSV file with columns stimulus and condition (path relative to the scenario file)'),
    z.strictObject({ stimulus: z.array(z.number()).min(1), condition: z.array(z.string()).min(1) }),
  ])
  .describe('explicit stimuli per condition (e.g. a discrete set); replaces the stimulus distribution');

const generateSchema = z
  .strictObject({
    models: z.array(z.string()).optional().describe('names of the models that generate synthetic observers (default: all)'),
    observers: z.number().int().min(1).default(20).describe('synthetic observers per generating model'),
    parameters: z.record(z.string(), drawSchema).default({}).describe('how true parameters are drawn, by parameter name'),
    perModel: z.record(z.string(), z.record(z.string(), drawSchema)).default({}),
    drawFile: z
      .union([
        z.string().min(1).describe('CSV of fitted parameters (columns participant, model, then parameter names), e.g. from `lossprobe fit --draws-out`; path relative to the scenario file'),
        z.strictObject({ model: z.array(z.string()), participant: z.array(z.string()), values: z.array(z.record(z.string(), z.number())) }),
      ])
      .optional()
      .describe("resample participants' fitted parameter vectors for the synthetic observers (replaces the draws of the parameters it lists)"),
  })
  .prefault({});

/** A design variant: a name and the design fields it replaces in the base scenario. */
export const variantSchema = z.strictObject({
  name: z.string().min(1).regex(/^[A-Za-z0-9_.-]+$/, 'use letters, digits, ".", "_" or "-" only'),
  description: z.string().optional(),
  stimulus: distributionSchema.optional().describe('stimulus distribution of this variant'),
  trialList: trialListSchema.optional(),
  conditions: z.array(conditionSchema).min(1).optional().describe('conditions (noise levels) of this variant; names must stay those the models refer to'),
  response: responseSchema.optional(),
  trials: trialsSchema.optional(),
  split: z.record(z.string(), z.number().int().min(1).max(20)).optional().describe('trials per block for each condition (e.g. {brief: 2, long: 1})'),
  generate: generateSchema.optional().describe('replaces the whole generate block (e.g. to draw the noise of new conditions)'),
});
export type DesignVariant = z.infer<typeof variantSchema>;

export const scenarioSchema = z
  .strictObject({
    name: z.string().min(1).regex(/^[A-Za-z0-9_.-]+$/, 'use letters, digits, ".", "_" or "-" only').default('study'),
    description: z.string().optional(),
    seed: z.number().int().nonnegative().default(1),
    prior: distributionSchema.describe("the observer's prior"),
    stimulus: distributionSchema.optional().describe('stimulus distribution (default: the prior)'),
    trialList: trialListSchema.optional(),
    conditions: z.array(conditionSchema).min(1, 'at least one condition is needed'),
    response: responseSchema,
    models: z.array(modelSchema).min(1, 'at least one candidate model is needed'),
    measurements: z.array(z.number()).optional(),
    trials: trialsSchema.default(240).describe('trials per observer, split evenly across conditions (or by split); a list runs a sweep'),
    split: z
      .record(z.string(), z.number().int().min(1).max(20))
      .optional()
      .describe('uneven trial split: how many trials of each condition every block holds (e.g. {brief: 2, long: 1}); default one each'),
    generate: generateSchema,
    data: z
      .strictObject({
        participant: z.string().min(1).optional().describe("column of the participant id in `fit --data` files (default 'participant')"),
        condition: z.string().min(1).optional().describe("column of the condition name (default 'condition')"),
        stimulus: z.string().min(1).optional().describe("column of the stimulus value (default 'stimulus')"),
        response: z.string().min(1).optional().describe("column of the response (default 'response')"),
        minTrials: z.number().int().min(1).optional().describe('fewest trials a participant may have (default 20)'),
      })
      .optional()
      .describe('how `fit` reads participants\' data files'),
    fitting: z
      .strictObject({
        criterion: z.enum(['aic', 'aicc', 'bic', 'cv']).default('bic'),
        margin: z.number().nonnegative().default(0).describe('criterion difference below which a dataset is undecided'),
        starts: z.number().int().min(1).max(50).default(4),
        evaluationsPerStart: z.number().int().min(20).optional(),
        folds: z.number().int().min(2).max(20).default(5).describe('folds for the cv criterion'),
      })
      .prefault({}),
    plan: planSchema.optional().describe('participants × trials sizing for the group analysis (lossprobe plan)'),
    variants: z.array(variantSchema).optional().describe('design variants that preview and size compare with the base design'),
  })
  .superRefine((s, ctx) => {
    const variantNames = new Set<string>(['base']);
    (s.variants ?? []).forEach((v, i) => {
      if (variantNames.has(v.name)) ctx.addIssue({ code: 'custom', message: `variant name '${v.name}' is used twice (or is the reserved name 'base')`, path: ['variants', i, 'name'] });
      variantNames.add(v.name);
    });
    const names = s.models.map((m) => m.name);
    const seen = new Set<string>();
    names.forEach((n, i) => {
      if (seen.has(n)) ctx.addIssue({ code: 'custom', message: `model name '${n}' is used twice`, path: ['models', i, 'name'] });
      seen.add(n);
    });
    (s.generate.models ?? []).forEach((g, i) => {
      if (!names.includes(g)) ctx.addIssue({ code: 'custom', message: `'${g}' is not one of the models (${names.join(', ')})`, path: ['generate', 'models', i] });
    });
    for (const m of Object.keys(s.generate.perModel)) {
      if (!names.includes(m)) ctx.addIssue({ code: 'custom', message: `'${m}' is not one of the models (${names.join(', ')})`, path: ['generate', 'perModel', m] });
    }
    if (s.trialList && typeof s.trialList !== 'string') {
      const tl = s.trialList;
      if (tl.stimulus.length !== tl.condition.length) ctx.addIssue({ code: 'custom', message: 'stimulus and condition lists must have the same length', path: ['trialList'] });
      const names = new Set(s.conditions.map((c) => c.name));
      tl.condition.forEach((c, i) => {
        if (!names.has(c)) ctx.addIssue({ code: 'custom', message: `trial ${i + 1}: unknown condition '${c}' (known: ${[...names].join(', ')})`, path: ['trialList', 'condition', i] });
      });
      for (const c of names) if (!tl.condition.includes(c)) ctx.addIssue({ code: 'custom', message: `condition '${c}' has no trials in the trial list`, path: ['trialList'] });
    }
    if (s.plan) for (const [path, message] of planProblems(s.plan, names, s.fitting.criterion)) ctx.addIssue({ code: 'custom', message, path: ['plan', ...path] });
    for (const name of Object.keys(s.split ?? {}))
      if (!s.conditions.some((c) => c.name === name)) ctx.addIssue({ code: 'custom', message: `'${name}' is not one of the conditions (${s.conditions.map((c) => c.name).join(', ')})`, path: ['split', name] });
    const cond = new Set<string>();
    s.conditions.forEach((c, i) => {
      if (cond.has(c.name)) ctx.addIssue({ code: 'custom', message: `condition name '${c.name}' is used twice`, path: ['conditions', i, 'name'] });
      cond.add(c.name);
    });
  });

export type Scenario = z.infer<typeof scenarioSchema>;
export type ScenarioModel = z.infer<typeof modelSchema>;
