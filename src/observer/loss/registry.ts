/**
 * The one table of loss families. Adding a loss family: one file that fills in
 * `LossFunction` plus a family record (name, schema, parameters, create), and
 * one line in each list below.
 */
import { z } from 'zod';
import { squaredFamily, squaredSchema } from './squared.js';
import { absoluteFamily, absoluteSchema } from './absolute.js';
import { hitOrMissFamily, hitOrMissSchema } from './hitOrMiss.js';
import { powerFamily, powerSchema } from './power.js';
import { asymmetricLinearFamily, asymmetricLinearSchema } from './asymmetricLinear.js';
import { invertedGaussianFamily, invertedGaussianSchema } from './invertedGaussian.js';
import type { LossFunction, LossParameter } from './types.js';

export interface LossFamily {
  name: string;
  summary: string;
  parameters: LossParameter[];
  create(params: Record<string, number>): LossFunction;
}

export const lossFamilies: readonly LossFamily[] = [
  squaredFamily,
  absoluteFamily,
  hitOrMissFamily,
  powerFamily,
  asymmetricLinearFamily,
  invertedGaussianFamily,
] as LossFamily[];

export const lossSchema = z.discriminatedUnion('family', [
  squaredSchema,
  absoluteSchema,
  hitOrMissSchema,
  powerSchema,
  asymmetricLinearSchema,
  invertedGaussianSchema,
]);
export type LossSpec = z.infer<typeof lossSchema>;

export function lossFamily(name: string): LossFamily {
  const f = lossFamilies.find((l) => l.name === name);
  if (!f) throw new Error(`unknown loss family '${name}' (known: ${lossFamilies.map((l) => l.name).join(', ')})`);
  return f;
}

export function createLoss(spec: LossSpec): LossFunction {
  const { family, ...params } = spec as { family: string } & Record<string, number>;
  return lossFamily(family).create(params);
}
