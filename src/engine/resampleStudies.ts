/**
 * Resampled studies of a plan on a worker pool. The studies are cut into
 * batches (analysis/planGrid.ts: studyBatches); each batch is a pure function
 * of the pool, the options and its study indices, and the verdicts are added
 * up in study order, so the grid is identical whatever the worker count.
 */
import { Piscina } from 'piscina';
import { batchVerdicts, gridFromVerdicts, studyBatches, type BatchVerdicts, type GridCell, type GridOptions } from '../analysis/planGrid.js';
import type { PlanPool } from '../analysis/planPool.js';
import { resampleStreams, type ResampleTask } from './resampleWorker.js';

export async function resampleOnWorkers(pool: PlanPool, o: Omit<GridOptions, 'streamFor'>, streamKey: string, workers: number): Promise<GridCell[]> {
  const batches = studyBatches(o);
  const options = { participants: o.participants, population: o.population, majority: o.majority, analysis: o.analysis };
  let verdicts: BatchVerdicts[];
  if (workers <= 1 || batches.length <= 1) {
    const streamFor = resampleStreams(streamKey);
    verdicts = batches.map((b) => batchVerdicts(pool, { ...options, streamFor }, b));
  } else {
    const piscina = new Piscina<ResampleTask, BatchVerdicts>({ filename: new URL('./resampleWorker.js', import.meta.url).href, minThreads: workers, maxThreads: workers });
    try {
      verdicts = await Promise.all(batches.map((batch) => piscina.run({ pool, options, streamKey, batch })));
    } finally {
      await piscina.destroy();
    }
  }
  return gridFromVerdicts(pool, o, batches, verdicts);
}
