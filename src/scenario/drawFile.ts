/**
 * Reading a parameter-draw file: fitted parameters of participants (as
 * `lossprobe fit --draws-out` writes them), one row per participant and
 * model, columns participant, model, then one column per parameter name.
 * Empty cells mean "not a parameter of this model". The rows are inlined into
 * the resolved scenario, so its hash covers them and workers need no files.
 */
import { UserError } from '../cli/userError.js';
import { parseDecimal, problemList, readCsvRows } from '../data/participantData.js';

export interface DrawFile {
  model: string[];
  participant: string[];
  values: Record<string, number>[];
}

export function readDrawFile(path: string): DrawFile {
  const { header, rows } = readCsvRows(path, 'parameter-draw file');
  for (const c of ['participant', 'model']) if (!header.includes(c)) throw new UserError(`${path}: the header must name a '${c}' column (found: ${header.join(', ')})`);
  const names = header.filter((h) => h !== 'participant' && h !== 'model');
  const problems: string[] = [];
  const out: DrawFile = { model: [], participant: [], values: [] };
  for (const { line, cells } of rows) {
    const values: Record<string, number> = {};
    for (const n of names) {
      if ((cells[n] ?? '') === '') continue;
      const v = parseDecimal(cells[n]);
      if (v === null) problems.push(`line ${line}: ${n} '${cells[n]}' is not a number`);
      else values[n] = v;
    }
    if (!cells.model) problems.push(`line ${line}: model is empty`);
    out.model.push(cells.model ?? '');
    out.participant.push(cells.participant ?? '');
    out.values.push(values);
  }
  if (!rows.length) problems.push('the file has no rows');
  if (problems.length) throw new UserError(problemList(path, problems));
  return out;
}
