/**
 * The one table of distribution families. Adding a family: write its file
 * (schema + class + family record) and add one line here.
 */
import { z } from 'zod';
import { gaussianFamily, gaussianSchema } from './gaussian.js';
import { logNormalFamily, logNormalSchema } from './logNormal.js';
import { gammaFamily, gammaSchema } from './gamma.js';
import { uniformFamily, uniformSchema } from './uniform.js';
import { gaussianMixtureFamily, gaussianMixtureSchema } from './gaussianMixture.js';
import type { Distribution } from './types.js';

export const distributionFamilies = [gaussianFamily, logNormalFamily, gammaFamily, uniformFamily, gaussianMixtureFamily] as const;

export const distributionSchema = z.union([gaussianSchema, logNormalSchema, gammaSchema, uniformSchema, gaussianMixtureSchema]);
export type DistributionSpec = z.infer<typeof distributionSchema>;

export function createDistribution(spec: DistributionSpec): Distribution {
  const family = distributionFamilies.find((f) => f.name === spec.family);
  if (!family) throw new Error(`unknown distribution family '${(spec as { family: string }).family}'`);
  return (family.create as (s: DistributionSpec) => Distribution)(spec);
}
