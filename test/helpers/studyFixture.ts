/**
 * The tiny recovery study shared by the engine tests (test/engine*.test.ts),
 * and the means to run it as a user does: the BUILT tool (dist/cli/main.js,
 * produced by `npm run build`) in a child process, never the TS sources, so
 * the worker pool loads the compiled worker exactly as in production.
 *
 * The single-worker reference run is made once per test file (vitest gives
 * each file its own module instance) and shared by every test of that file.
 */
import { spawn, spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const ROOT = process.cwd();
export const CLI = join(ROOT, 'dist', 'cli', 'main.js');
/** gamma prior, one constant-noise condition, 3 candidates, 3 observers each, 120 trials, 1 start: 9 jobs. */
export const TINY = join(ROOT, 'test', 'fixtures', 'tiny-study.yaml');
export const TINY_MODELS = ['squared', 'absolute', 'asymmetric'];
export const TINY_OBSERVERS = 3;
export const TINY_SEED = 4242;
export const TINY_JOBS = TINY_MODELS.length * TINY_OBSERVERS;

/** The parent's environment without any LOSSPROBE_* fault hooks, plus `extra`. */
function childEnv(extra: Record<string, string> = {}): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!k.startsWith('LOSSPROBE_')) env[k] = v;
  return { ...env, ...extra };
}

/** `lossprobe ARGS` with the built CLI, synchronously. */
export function lossprobe(args: string[], env: Record<string, string> = {}): SpawnSyncReturns<string> {
  return spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', env: childEnv(env), cwd: ROOT, timeout: 180_000 });
}

/** `lossprobe run tiny-study.yaml --out FOLDER --quiet ARGS`. */
export function runTiny(folder: string, args: string[] = [], env: Record<string, string> = {}): SpawnSyncReturns<string> {
  return lossprobe(['run', TINY, '--out', folder, '--quiet', ...args], env);
}

/** Start `lossprobe ARGS` without waiting (for signals); resolves with exit code and output. */
export function lossprobeAsync(args: string[], env: Record<string, string> = {}) {
  const child = spawn(process.execPath, [CLI, ...args], { env: childEnv(env), cwd: ROOT });
  let stdout = '';
  let stderr = '';
  child.stdout.setEncoding('utf8').on('data', (s: string) => (stdout += s));
  child.stderr.setEncoding('utf8').on('data', (s: string) => (stderr += s));
  const done = new Promise<{ status: number | null; signal: NodeJS.Signals | null; stdout: string; stderr: string }>((resolve) =>
    child.on('close', (status, signal) => resolve({ status, signal, stdout, stderr })),
  );
  return { child, done };
}

const tmpRoots: string[] = [];
/** A fresh temporary folder; removed by removeTemp(). */
export function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'lp-engine-'));
  tmpRoots.push(d);
  return d;
}
export function removeTemp(): void {
  for (const d of tmpRoots.splice(0)) rmSync(d, { recursive: true, force: true });
}

export interface ReferenceRun {
  folder: string;
  stdout: string;
  stderr: string;
}

let reference: ReferenceRun | null = null;
/** The uninterrupted single-worker run with --json, made once and shared. */
export function referenceRun(): ReferenceRun {
  if (reference) return reference;
  const folder = join(tempDir(), 'reference');
  const r = runTiny(folder, ['--workers', '1', '--json']);
  if (r.status !== 0) throw new Error(`reference run failed (exit ${r.status}):\n${r.stderr}`);
  reference = { folder, stdout: r.stdout, stderr: r.stderr };
  return reference;
}

/** Copy a run folder (e.g. the reference) to a new place to tamper with. */
export function copyRun(from: string, to: string): void {
  cpSync(from, to, { recursive: true });
}

export const readText = (path: string) => readFileSync(path, 'utf8');
export const readJson = <T = unknown>(path: string): T => JSON.parse(readFileSync(path, 'utf8')) as T;
export const exists = existsSync;

/** Raw lines of jobs.jsonl (each without its newline; a missing final newline keeps the last fragment). */
export function jobLines(folder: string): string[] {
  const text = readText(join(folder, 'jobs.jsonl'));
  const parts = text.split('\n');
  if (parts[parts.length - 1] === '') parts.pop();
  return parts;
}

const keyOf = (line: string) => (JSON.parse(line) as { key: string }).key;

/** jobs.jsonl with its lines sorted by job key (plain code-unit order): the bytes two runs must share. */
export function sortedJobs(folder: string): string {
  return jobLines(folder)
    .map((l) => [keyOf(l), l] as const)
    .sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0))
    .map(([, l]) => l)
    .join('\n');
}

export const summaryOf = (folder: string) => readJson<Record<string, any>>(join(folder, 'summary.json'));

/** RFC 4180 CSV: fields split on commas, double quotes quote (and "" escapes a quote). */
export function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') (field += '"'), i++;
      else if (ch === '"') quoted = false;
      else field += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') row.push(field), (field = '');
    else if (ch === '\n') row.push(field), rows.push(row), (row = []), (field = '');
    else if (ch !== '\r') field += ch;
  }
  if (quoted) throw new Error('CSV ends inside a quoted field');
  if (field !== '' || row.length) row.push(field), rows.push(row);
  return rows;
}
