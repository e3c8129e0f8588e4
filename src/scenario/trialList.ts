/**
 * Reading an explicit trial list: a CSV with a header row and the columns
 * `stimulus` and `condition` (the condition column may be left out when the
 * design has one condition). Parsing by csv-parse; every bad row is reported
 * with its line number, all at once.
 */
import { readFileSync } from 'node:fs';
import { parse } from 'csv-parse/sync';
import { UserError } from '../cli/userError.js';

export interface TrialList {
  stimulus: number[];
  condition: string[];
}

export function readTrialList(path: string, conditionNames: string[]): TrialList {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch {
    throw new UserError(`cannot read the trial list '${path}': no such file`);
  }
  let rows: Record<string, string>[];
  try {
    rows = parse(text, { columns: (h: string[]) => h.map((c) => c.trim().toLowerCase()), skip_empty_lines: true, trim: true }) as Record<string, string>[];
  } catch (e) {
    throw new UserError(`${path}: not a readable CSV file (${(e as Error).message})`);
  }
  if (!rows.length) throw new UserError(`${path}: the trial list has no rows`);
  const columns = Object.keys(rows[0]);
  if (!columns.includes('stimulus')) throw new UserError(`${path}: the header must name a 'stimulus' column (found: ${columns.join(', ')})`);
  const single = conditionNames.length === 1;
  if (!columns.includes('condition') && !single) throw new UserError(`${path}: the header must name a 'condition' column, since the scenario has ${conditionNames.length} conditions`);
  const problems: string[] = [];
  const list: TrialList = { stimulus: [], condition: [] };
  rows.forEach((row, i) => {
    const line = i + 2; // header is line 1
    const x = Number(row.stimulus);
    if (row.stimulus === '' || !Number.isFinite(x)) problems.push(`line ${line}: stimulus '${row.stimulus}' is not a number`);
    const c = row.condition ?? conditionNames[0];
    if (!conditionNames.includes(c)) problems.push(`line ${line}: unknown condition '${c}' (known: ${conditionNames.join(', ')})`);
    list.stimulus.push(x);
    list.condition.push(c);
  });
  if (problems.length) throw new UserError(`${path} has ${problems.length} problem${problems.length > 1 ? 's' : ''}:\n${problems.slice(0, 20).map((p) => `  - ${p}`).join('\n')}${problems.length > 20 ? `\n  - … and ${problems.length - 20} more` : ''}`);
  return list;
}
