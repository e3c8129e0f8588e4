/**
 * A keyed job list run on a piscina worker pool, each finished line appended
 * to a .jsonl file as it ends. Keys already in the file are skipped (resume).
 * A job whose worker throws or dies is retried once, then recorded through
 * `failedLine` with its message; the run goes on. Shared by `run` (synthetic
 * datasets) and `fit` (participants, bootstrap replicates).
 */
import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import { JobWriter, readJobLines } from './store.js';
import { Progress } from './progress.js';

export interface PoolOptions<Task, Line extends { key: string }> {
  /** The .jsonl file finished lines are appended to. */
  path: string;
  /** The built worker module (default export: task → line). */
  worker: URL;
  jobs: readonly { key: string; task: Task }[];
  failedLine: (key: string, message: string) => Line;
  workers?: number;
  quiet?: boolean;
}

export interface PoolOutcome<Line> {
  /** Lines found in the file plus those written now, in finishing order. */
  lines: Line[];
  ran: number;
  skipped: number;
  failed: number;
  interrupted: boolean;
}

export async function runPool<Task, Line extends { key: string }>(o: PoolOptions<Task, Line>): Promise<PoolOutcome<Line>> {
  const existing = readJobLines<Line>(o.path).lines;
  const done = new Set(existing.map((l) => l.key));
  const plan = o.jobs.filter((j) => !done.has(j.key));
  const writer = new JobWriter<Line>(o.path);
  const workers = Math.max(1, o.workers ?? availableParallelism());
  const exitAfter = process.env.LOSSPROBE_EXIT_AFTER ? Number(process.env.LOSSPROBE_EXIT_AFTER) : Infinity;
  const pool = new Piscina<Task, Line>({ filename: o.worker.href, minThreads: workers, maxThreads: workers });
  const progress = new Progress(plan.length, o.quiet ?? false);
  let interrupted = false;
  const onSigint = () => {
    // Stop at once: finished lines are on disk; running jobs are redone on --resume.
    interrupted = true;
    void pool.destroy();
  };
  process.once('SIGINT', onSigint);
  const lines: Line[] = [...existing];
  let written = 0;
  let failed = 0;
  let next = 0;
  const inFlight = new Set<Promise<void>>();
  const runOne = async (job: { key: string; task: Task }): Promise<void> => {
    let line: Line;
    try {
      line = await pool.run(job.task);
    } catch {
      if (interrupted) return;
      try {
        // A successful retry yields the same line as a first success (the job is a
        // pure function of its key), so the line does not record the retry.
        line = await pool.run(job.task);
      } catch (second) {
        if (interrupted) return;
        line = o.failedLine(job.key, (second as Error).message ?? String(second));
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
