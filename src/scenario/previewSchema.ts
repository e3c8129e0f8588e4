/**
 * Schema of a preview scenario: the observer side of a design (prior,
 * conditions with their noise, response stage) and the candidate losses.
 * The schema is the single source of the TypeScript types and of the error
 * messages users see.
 */
import { z } from 'zod';
import { distributionSchema } from '../observer/distributions/registry.js';
import { noiseSchema } from '../observer/noise/registry.js';
import { lossSchema } from '../observer/loss/registry.js';

export const conditionSchema = z.strictObject({
  name: z.string().min(1).describe('label of the condition (a noise level)'),
  noise: noiseSchema,
});

export const responseSchema = z
  .strictObject({
    lower: z.number().describe('lower end of the response scale'),
    upper: z.number().describe('upper end of the response scale'),
    ends: z.enum(['censor', 'open']).default('censor').describe("'censor': responses past an end are recorded at the end; 'open': no clipping"),
    motorSd: z.number().positive().default(1).describe('sd of motor (response) noise, > 0'),
    lapseRate: z.number().min(0).lt(1).default(0.02).describe('probability of a random response, in [0, 1)'),
    motorAware: z.boolean().default(false).describe('the observer allows for its own motor noise when choosing a response'),
  })
  .refine((r) => r.upper > r.lower, { message: 'upper must be greater than lower', path: ['upper'] });

export const modelSchema = z.strictObject({
  name: z.string().min(1).regex(/^[A-Za-z0-9_.-]+$/, 'use letters, digits, ".", "_" or "-" only'),
  loss: lossSchema,
});

export const previewScenarioSchema = z
  .strictObject({
    name: z.string().min(1).default('preview'),
    description: z.string().optional(),
    prior: distributionSchema,
    conditions: z.array(conditionSchema).min(1, 'at least one condition is needed'),
    response: responseSchema,
    models: z.array(modelSchema).min(1, 'at least one candidate model is needed'),
    measurements: z.array(z.number()).optional().describe('measurements at which to tabulate the estimates'),
  })
  .refine((s) => new Set(s.models.map((m) => m.name)).size === s.models.length, { message: 'model names must be unique', path: ['models'] });

export type PreviewScenario = z.infer<typeof previewScenarioSchema>;
