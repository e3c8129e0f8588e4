/**
 * The truth of an exported study, kept apart from its data: the resolved
 * scenario and, per blind synthetic participant id, the job it came from
 * (generating model, observer, trial count) and its true parameters.
 * `export` writes it; `grade` reads it.
 */
import { streamFromKey } from '../numerics/rng.js';
import { scenarioSchema, type Scenario } from '../scenario/schema.js';
import type { JobSpec } from './plan.js';

export const TRUTH_VERSION = 1;

export interface TruthParticipant {
  participant: string;
  key: string;
  generating: string;
  observer: number;
  trials: number;
  truth: Record<string, number>;
}

export interface TruthFile {
  version: number;
  kind: 'lossprobe-truth';
  hash: string;
  scenario: Scenario;
  participants: TruthParticipant[];
}

/**
 * Blind ids: the jobs in a seeded random order, numbered s0001, s0002, …, so
 * neither the id nor the row order gives the generating model away.
 */
export function blindIds(jobs: readonly JobSpec[], seed: number): Map<string, string> {
  const order = jobs.map((j) => j.key);
  const rand = streamFromKey(`lossprobe/${seed}/export-order`);
  for (let i = order.length - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    [order[i], order[j]] = [order[j], order[i]];
  }
  const width = Math.max(4, String(order.length).length);
  return new Map(order.map((key, i) => [key, `s${String(i + 1).padStart(width, '0')}`]));
}

/** Parse a truth file's JSON; the message says what is wrong. */
export function parseTruthFile(json: unknown): TruthFile | string {
  const t = json as Partial<TruthFile> | null;
  if (!t || t.kind !== 'lossprobe-truth' || !Array.isArray(t.participants) || typeof t.hash !== 'string') return 'not a lossprobe truth file (written by `lossprobe export`)';
  if (t.version !== TRUTH_VERSION) return `truth file version ${String(t.version)} is not the supported version ${TRUTH_VERSION}`;
  const parsed = scenarioSchema.safeParse(t.scenario);
  if (!parsed.success) return 'its scenario does not validate (was it edited?)';
  return { ...(t as TruthFile), scenario: parsed.data };
}
