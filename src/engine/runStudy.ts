/**
 * Runs a study's job plan on the worker pool (engine/pool.ts), appending each
 * finished job to jobs.jsonl as it ends. Finished keys found in the folder are
 * skipped (resume). A job whose worker throws or dies is retried once, then
 * recorded as failed with its message; the run goes on.
 */
import { join } from 'node:path';
import type { JobLine } from '../analysis/types.js';
import { planJobs, type JobSpec } from './plan.js';
import type { ResolvedStudy } from './resolve.js';
import type { WorkerTask } from './worker.js';
import { runPool } from './pool.js';

export interface RunOptions {
  folder: string;
  workers?: number;
  /** Only these jobs (a shard); default all. */
  jobs?: JobSpec[];
  quiet?: boolean;
}

export interface RunOutcome {
  lines: JobLine[];
  ran: number;
  skipped: number;
  failed: number;
  interrupted: boolean;
}

function failedLine(spec: JobSpec, message: string): JobLine {
  return {
    key: spec.key,
    generating: spec.generating,
    observer: spec.observer,
    trials: spec.trials,
    truth: {},
    truthFree: {},
    status: 'failed',
    error: message,
    attempts: 2,
    fits: [],
    comparison: null,
  };
}

export async function runStudy(study: ResolvedStudy, o: RunOptions): Promise<RunOutcome> {
  const specs = new Map((o.jobs ?? planJobs(study)).map((j) => [j.key, j]));
  return runPool<WorkerTask, JobLine>({
    path: join(o.folder, 'jobs.jsonl'),
    worker: new URL('./worker.js', import.meta.url),
    jobs: [...specs.values()].map((spec) => ({ key: spec.key, task: { scenario: study.scenario, hash: study.hash, key: spec.key } })),
    failedLine: (key, message) => failedLine(specs.get(key)!, message),
    workers: o.workers,
    quiet: o.quiet,
  });
}
