/**
 * Reading scenario files (YAML or JSON) and validating them against a schema,
 * turning every problem into a UserError that names the field.
 */
import { readFileSync } from 'node:fs';
import { extname } from 'node:path';
import { parse as parseYaml, YAMLParseError } from 'yaml';
import type { z } from 'zod';
import { UserError, formatSchemaIssues } from '../cli/userError.js';

export function readStructuredFile(path: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    throw new UserError(`cannot read scenario file '${path}': ${(e as NodeJS.ErrnoException).code === 'ENOENT' ? 'no such file' : (e as Error).message}`);
  }
  const ext = extname(path).toLowerCase();
  try {
    if (ext === '.json') return JSON.parse(text);
    return parseYaml(text, { prettyErrors: true });
  } catch (e) {
    if (e instanceof YAMLParseError) {
      const pos = e.linePos?.[0];
      throw new UserError(`${path}${pos ? `, line ${pos.line}, column ${pos.col}` : ''}: not valid YAML (${e.message.split('\n')[0]})`);
    }
    throw new UserError(`${path}: not valid ${ext === '.json' ? 'JSON' : 'YAML'} (${(e as Error).message})`);
  }
}

export function validate<S extends z.ZodType>(schema: S, input: unknown, source: string): z.infer<S> {
  const result = schema.safeParse(input);
  if (!result.success) throw new UserError(formatSchemaIssues(source, result.error, input));
  return result.data;
}
