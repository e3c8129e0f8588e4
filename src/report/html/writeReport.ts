/**
 * `lossprobe report RUN_FOLDER`, and the last step of the commands that
 * write a run folder: report.html plus every figure as figures/*.svg.
 * Both are written under temporary names and renamed, so an interrupted
 * report never leaves a half-written page.
 */
import { renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { readRunFolder } from './data.js';
import { buildReport } from './page.js';
import { writeFolderAtomically } from '../writeFolder.js';

export interface WrittenReport {
  path: string;
  figures: string[];
  sections: string[];
  problems: string[];
}

export async function writeReport(folder: string): Promise<WrittenReport> {
  const data = readRunFolder(folder);
  const built = await buildReport(data);
  const files: Record<string, string> = {};
  for (const f of built.figures) files[f.file] = f.svg;
  writeFolderAtomically(join(folder, 'figures'), files);
  const path = join(folder, 'report.html');
  const tmp = `${path}.partial-${process.pid}`;
  writeFileSync(tmp, built.html);
  renameSync(tmp, path);
  return { path, figures: Object.keys(files).map((f) => join(folder, 'figures', f)), sections: built.sections, problems: built.problems };
}
