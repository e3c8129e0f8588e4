/**
 * Asymmetric linear loss with level τ: τ·|e| for underestimates (e < 0) and
 * (1−τ)·|e| for overestimates. The Bayes action is the posterior τ-quantile
 * (Berger 1985, §4.4.2), so τ > ½ biases responses upwards.
 */
import { z } from 'zod';
import type { LossFunction, LossParameter } from './types.js';

export const asymmetricLinearSchema = z.strictObject({
  family: z.literal('asymmetric-linear'),
  level: z.number().gt(0).lt(1).describe('τ in (0, 1): the weight of underestimates'),
});

export const asymmetricLinearParameters: LossParameter[] = [
  { name: 'level', description: 'weight τ of underestimates', min: 0.02, max: 0.98, transform: 'logit', typical: 0.7 },
];

export function asymmetricLinearLoss(level: number): LossFunction {
  return {
    family: 'asymmetric-linear',
    params: { level },
    loss: (e) => (e < 0 ? -level * e : (1 - level) * e),
    estimate: (post, hint) => post.quantile(level, hint),
    // The quantile straight from the evaluated window, without normalising the posterior.
    estimateAt: (post, m, hint) => post.quantileAt(m, level, hint),
    mayJump: false,
    symmetric: level === 0.5,
  };
}

export const asymmetricLinearFamily = {
  name: 'asymmetric-linear' as const,
  summary: 'linear loss weighting under- and overestimates τ : 1−τ; estimate = posterior τ-quantile',
  schema: asymmetricLinearSchema,
  parameters: asymmetricLinearParameters,
  create: (s: { level: number }): LossFunction => asymmetricLinearLoss(s.level),
};
