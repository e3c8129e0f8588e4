/**
 * fit.json: what a shard of `fit --shard K/N` records beside its jobs so that
 * `merge` can finish the joined folder exactly as an unsharded fit would: the
 * data file as named on the command line, its columns, the evidence for
 * random-effects selection, every participant (the whole plan, so merge can
 * check the shards against it) and the optional recovery study and draw file.
 * The participants' data stay in the data file; merge needs only the jobs.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { z } from 'zod';
import { writeFileAtomically } from '../engine/atomicFile.js';
import { UserError, formatSchemaIssues } from './userError.js';

export const FIT_SETTINGS_FILE = 'fit.json';

export const fitSettingsSchema = z
  .object({
    version: z.literal(1),
    dataFile: z.string().min(1),
    columns: z.object({ participant: z.string(), condition: z.string(), stimulus: z.string(), response: z.string() }).strict(),
    evidence: z.enum(['bic', 'cv']),
    participants: z.array(z.string()),
    recovery: z.string().optional(),
    drawsOut: z.string().optional(),
    drawsParticipants: z.array(z.string()).optional(),
  })
  .strict();

export type FitSettings = z.infer<typeof fitSettingsSchema>;

/** Write fit.json, or check that a resumed shard's one says the same. */
export function writeFitSettings(folder: string, settings: FitSettings): void {
  const path = join(folder, FIT_SETTINGS_FILE);
  const text = JSON.stringify(settings, null, 2) + '\n';
  if (existsSync(path) && readFileSync(path, 'utf8') !== text)
    throw new UserError(`${path} records other fit settings (data file, columns, evidence, recovery or draw file) than this command; resume the shard with the same flags, or use another --out`);
  writeFileAtomically(path, text);
}

export function readFitSettings(folder: string): FitSettings {
  const path = join(folder, FIT_SETTINGS_FILE);
  let raw: unknown;
  try {
    raw = JSON.parse(readFileSync(path, 'utf8'));
  } catch (e) {
    throw new UserError(`${path}: cannot read the fit shard's settings (${(e as Error).message}); rerun that shard with \`lossprobe fit SCENARIO --data FILE --shard K/N --resume\``);
  }
  const parsed = fitSettingsSchema.safeParse(raw);
  if (!parsed.success) throw new UserError(formatSchemaIssues(path, parsed.error, raw));
  return parsed.data;
}
