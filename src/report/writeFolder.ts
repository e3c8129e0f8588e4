/**
 * Writes a set of output files all-or-nothing: everything goes into a hidden
 * sibling folder first and is renamed into place at the end, so a failure
 * never leaves a half-written output folder behind.
 */
import { mkdirSync, renameSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { dirname, basename, join } from 'node:path';

export function writeFolderAtomically(target: string, files: Record<string, string>): void {
  const parent = dirname(target);
  mkdirSync(parent, { recursive: true });
  const staging = join(parent, `.${basename(target)}.partial-${process.pid}`);
  rmSync(staging, { recursive: true, force: true });
  try {
    for (const [name, content] of Object.entries(files)) {
      const path = join(staging, name);
      mkdirSync(dirname(path), { recursive: true });
      writeFileSync(path, content);
    }
    if (existsSync(target)) rmSync(target, { recursive: true, force: true });
    renameSync(staging, target);
  } catch (e) {
    rmSync(staging, { recursive: true, force: true });
    throw e;
  }
}
