/**
 * Worker-thread entry for resampling studies: a batch in, its verdicts out.
 * Thin: the streams are rebuilt from their key prefix, so the batch's
 * verdicts are the same in any thread.
 */
import { batchVerdicts, type BatchVerdicts, type StudyBatch, type VerdictOptions } from '../analysis/planGrid.js';
import type { PlanPool } from '../analysis/planPool.js';
import { streamFromKey } from '../numerics/rng.js';

export interface ResampleTask {
  pool: PlanPool;
  options: Omit<VerdictOptions, 'streamFor'>;
  /** Streams are streamFromKey(`${streamKey}/${key}`). */
  streamKey: string;
  batch: StudyBatch;
}

export const resampleStreams = (streamKey: string) => (key: string) => streamFromKey(`${streamKey}/${key}`);

export default function resample(task: ResampleTask): BatchVerdicts {
  return batchVerdicts(task.pool, { ...task.options, streamFor: resampleStreams(task.streamKey) }, task.batch);
}
