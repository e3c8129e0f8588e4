/** Absolute error |e|: the Bayes action is the posterior median (Berger 1985, §4.4.2). */
import { z } from 'zod';
import type { LossFunction } from './types.js';

export const absoluteSchema = z.strictObject({ family: z.literal('absolute') });

export const absoluteLoss: LossFunction = {
  family: 'absolute',
  params: {},
  loss: (e) => Math.abs(e),
  estimate: (post, hint) => post.quantile(0.5, hint),
  // The quantile straight from the evaluated window, without normalising the posterior.
  estimateAt: (post, m, hint) => post.quantileAt(m, 0.5, hint),
  mayJump: false,
  symmetric: true,
};

export const absoluteFamily = {
  name: 'absolute' as const,
  summary: 'absolute error; estimate = posterior median',
  schema: absoluteSchema,
  parameters: [],
  create: (): LossFunction => absoluteLoss,
};
