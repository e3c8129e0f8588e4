/**
 * Reading the small JSON records lossprobe writes beside its results
 * (shard.json, size.json, a round's plan.json): parsed and checked against
 * their zod schema, with one clear message naming the file and the field
 * when a file was edited, cut short or comes from another version.
 */
import { existsSync, readFileSync } from 'node:fs';
import type { z } from 'zod';
import { UserError, formatSchemaIssues } from '../cli/userError.js';

/** The record in `path`, or null when there is no such file. `writtenBy` names the command that writes it. */
export function readJsonRecord<S extends z.ZodTypeAny>(path: string, schema: S, writtenBy: string): z.infer<S> | null {
  if (!existsSync(path)) return null;
  let raw: unknown;
  try {
    raw = JSON.parse(readFileSync(path, 'utf8'));
  } catch (e) {
    throw new UserError(`${path}: not valid JSON (${(e as Error).message}); it is written by ${writtenBy} and should not be edited`);
  }
  const parsed = schema.safeParse(raw);
  if (!parsed.success) throw new UserError(formatSchemaIssues(path, parsed.error, raw));
  return parsed.data;
}
