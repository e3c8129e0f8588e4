/**
 * Worker-thread entry for the pool: a job in, a JobLine out. The resolved
 * study arrives once per worker as JSON and is cached by its hash.
 */
import { resolveStudy, type ResolvedStudy } from './resolve.js';
import { runJob } from './runJob.js';
import type { Scenario } from '../scenario/schema.js';
import type { JobLine } from '../analysis/types.js';

let cached: { hash: string; study: ResolvedStudy } | null = null;

export interface WorkerTask {
  scenario: Scenario;
  hash: string;
  key: string;
}

export default function work(task: WorkerTask): JobLine {
  if (process.env.LOSSPROBE_FAULT_KEY && task.key === process.env.LOSSPROBE_FAULT_KEY) throw new Error(`fault injected for ${task.key}`);
  if (!cached || cached.hash !== task.hash) cached = { hash: task.hash, study: resolveStudy(task.scenario, 'scenario') };
  return runJob(cached.study, task.key);
}
