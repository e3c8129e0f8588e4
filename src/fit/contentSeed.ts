/**
 * Seeds derived from content, not from who asks: the same dataset fitted with
 * the same model gets the same starting points in every command (run, fit,
 * grade), on every machine.
 */
import { createHash } from 'node:crypto';
import type { Dataset } from '../observer/observer.js';
import type { CandidateModel } from './candidate.js';

export function datasetDigest(data: Dataset): string {
  const h = createHash('sha256');
  h.update(new Uint8Array(data.stimulus.buffer, data.stimulus.byteOffset, data.stimulus.byteLength));
  h.update(new Uint8Array(data.condition.buffer, data.condition.byteOffset, data.condition.byteLength));
  h.update(new Uint8Array(data.response.buffer, data.response.byteOffset, data.response.byteLength));
  return h.digest('hex');
}

export function fitSeedKey(data: Dataset, model: CandidateModel, extra = ''): string {
  const h = createHash('sha256');
  h.update(datasetDigest(data));
  h.update(JSON.stringify({ name: model.name, loss: model.lossFamily, free: model.free, base: model.base, prior: model.prior, noise: model.noise }));
  h.update(extra);
  return h.digest('hex').slice(0, 32);
}
