/**
 * Errors caused by the user's input. The CLI prints their message as a plain
 * paragraph (no stack trace) and exits with code 2.
 */
import type { z } from 'zod';

export class UserError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UserError';
  }
}

function describeValue(v: unknown): string {
  if (v === undefined) return 'nothing';
  const s = JSON.stringify(v);
  return s && s.length > 60 ? s.slice(0, 57) + '...' : String(s);
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let cur: unknown = root;
  for (const k of path) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<PropertyKey, unknown>)[k];
  }
  return cur;
}

/** One line per problem: where, what was found, what is allowed. */
export function formatSchemaIssues(source: string, error: z.ZodError, input: unknown): string {
  const lines = error.issues.map((issue) => {
    const where = issue.path.length ? issue.path.map(String).join('.') : '(top level)';
    const found = describeValue(valueAt(input, issue.path));
    if (issue.code === 'unrecognized_keys') return `  - ${where}: unknown key(s) ${issue.keys.map((k) => `'${k}'`).join(', ')} (check the spelling; unknown keys are not ignored)`;
    return `  - ${where}: ${issue.message} (found ${found})`;
  });
  return `${source} has ${error.issues.length} problem${error.issues.length > 1 ? 's' : ''}:\n${lines.join('\n')}`;
}
