/**
 * Write a file under a temporary name in the same folder and rename it into
 * place: a rename within one file system is atomic, so readers (and a run that
 * is killed mid-write) never see a half-written file.
 */
import { renameSync, rmSync, writeFileSync } from 'node:fs';

export function writeFileAtomically(path: string, text: string): void {
  const tmp = `${path}.partial-${process.pid}`;
  try {
    writeFileSync(tmp, text);
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw e;
  }
}
