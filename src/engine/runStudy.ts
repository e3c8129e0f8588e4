/**
 * Runs a study's job plan on a piscina worker pool, appending each finished
 * job to jobs.jsonl as it ends. Finished keys found in the folder are skipped
 * (resume). A job whose worker throws or dies is retried once, then recorded
 * as failed with its message; the run goes on.
 */
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { Piscina } from 'piscina';
import type { JobLine } from '../analysis/types.js';
import { planJobs, type JobSpec } from './plan.js';
import { JobWriter, readJobLines } from './store.js';
import type { ResolvedStudy } from './resolve.js';
import type { WorkerTask } from './worker.js';
import { Progress } from './progress.js';

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
  const path = join(o.folder, 'jobs.jsonl');
  const existing = readJobLines(path).lines;
  const done = new Map(existing.map((l) => [l.key, l]));
  const plan = (o.jobs ?? planJobs(study)).filter((j) => !done.has(j.key));
  const writer = new JobWriter(path);
  const workers = Math.max(1, o.workers ?? availableParallelism());
  const exitAfter = process.env.LOSSPROBE_EXIT_AFTER ? Number(process.env.LOSSPROBE_EXIT_AFTER) : Infinity;
  const pool = new Piscina<WorkerTask, JobLine>({
    filename: new URL('./worker.js', import.meta.url).href,
    minThreads: workers,
    maxThreads: workers,
  });
  const progress = new Progress(plan.length, o.quiet ?? false);
  let interrupted = false;
  const onSigint = () => {
    // Stop at once: finished lines are on disk; running jobs are redone on --resume.
    interrupted = true;
    void pool.destroy();
  };
  process.once('SIGINT', onSigint);
  const lines: JobLine[] = [...existing];
  let written = 0;
  let failed = 0;
  let next = 0;
  const inFlight = new Set<Promise<void>>();
  const runOne = async (spec: JobSpec): Promise<void> => {
    const task: WorkerTask = { scenario: study.scenario, hash: study.hash, key: spec.key };
    let line: JobLine;
    try {
      line = await pool.run(task);
    } catch {
      if (interrupted) return;
      try {
        // A successful retry yields the same line as a first success (the job is a
        // pure function of its key), so the line does not record the retry.
        line = await pool.run(task);
      } catch (second) {
        if (interrupted) return;
        line = failedLine(spec, (second as Error).message ?? String(second));
        failed++;
      }
    }
    if (interrupted) return;
    writer.append(line);
    lines.push(line);
    written++;
    progress.tick();
    // Deterministic fault hook for tests: die abruptly after k lines, as a kill would.
    if (written >= exitAfter) process.exit(137);
  };
  try {
    while (next < plan.length && !interrupted) {
      while (inFlight.size < 2 * workers && next < plan.length) {
        const p: Promise<void> = runOne(plan[next++]).finally(() => inFlight.delete(p));
        inFlight.add(p);
      }
      await Promise.race(inFlight);
    }
    await Promise.all(inFlight);
  } finally {
    process.removeListener('SIGINT', onSigint);
    progress.stop();
    writer.close();
    if (!interrupted) await pool.destroy();
  }
  return { lines, ran: written, skipped: existing.length, failed, interrupted };
}
