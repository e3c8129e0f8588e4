/** The one table of sensory-noise families: one file each, one line here. */
import { z } from 'zod';
import { constantNoiseFamily, constantNoiseSchema } from './constant.js';
import { scalarNoiseFamily, scalarNoiseSchema } from './scalar.js';
import { generalizedNoiseFamily, generalizedNoiseSchema } from './generalized.js';
import { logGaussianNoiseFamily, logGaussianNoiseSchema } from './logGaussian.js';
import type { SensoryNoise } from './types.js';

export const noiseFamilies = [constantNoiseFamily, scalarNoiseFamily, generalizedNoiseFamily, logGaussianNoiseFamily] as const;

export const noiseSchema = z.discriminatedUnion('family', [constantNoiseSchema, scalarNoiseSchema, generalizedNoiseSchema, logGaussianNoiseSchema]);
export type NoiseSpec = z.infer<typeof noiseSchema>;

export function createNoise(spec: NoiseSpec): SensoryNoise {
  const family = noiseFamilies.find((f) => f.name === spec.family);
  if (!family) throw new Error(`unknown sensory-noise family '${(spec as { family: string }).family}'`);
  return (family.create as (s: NoiseSpec) => SensoryNoise)(spec);
}
