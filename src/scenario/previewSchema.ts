/**
 * Schemas of the observer side of a scenario: conditions with their noise, the
 * response stage, and a candidate model's loss. scenario/schema.ts assembles
 * them into the one scenario schema.
 */
import { z } from 'zod';
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
