/** Squared error (e²): the Bayes action is the posterior mean (Berger 1985, §4.4.2). */
import { z } from 'zod';
import type { LossFunction } from './types.js';

export const squaredSchema = z.strictObject({ family: z.literal('squared') });

export const squaredLoss: LossFunction = {
  family: 'squared',
  params: {},
  loss: (e) => e * e,
  estimate: (post) => post.mean(),
  // The mean straight from the evaluated window, without storing the normalised posterior.
  estimateAt: (post, m) => post.meanAt(m),
  mayJump: false,
  symmetric: true,
};

export const squaredFamily = {
  name: 'squared' as const,
  summary: 'squared error; estimate = posterior mean',
  schema: squaredSchema,
  parameters: [],
  create: (): LossFunction => squaredLoss,
};
