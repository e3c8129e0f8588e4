/**
 * Worker-thread entry of `fit`: a participant or bootstrap task in, its line
 * out. The resolved study is cached by its hash, as in engine/worker.ts.
 */
import { resolveStudy, type ResolvedStudy } from './resolve.js';
import { bootstrapReplicate, fitParticipant, type FitTask } from './fitParticipant.js';
import type { BootstrapLine, ParticipantLine } from '../analysis/participantTypes.js';

let cached: { hash: string; study: ResolvedStudy } | null = null;

export default function work(task: FitTask): ParticipantLine | BootstrapLine {
  if (process.env.LOSSPROBE_FAULT_KEY && task.key === process.env.LOSSPROBE_FAULT_KEY) throw new Error(`fault injected for ${task.key}`);
  if (!cached || cached.hash !== task.hash) cached = { hash: task.hash, study: resolveStudy(task.scenario, 'scenario') };
  return task.kind === 'participant' ? fitParticipant(cached.study, task) : bootstrapReplicate(cached.study, task);
}
