/**
 * Reading participants' data: a tidy CSV with one row per trial and columns
 * for participant, condition, stimulus and response (names configurable;
 * extra columns ignored). Parsed by csv-parse. Every problem is collected with
 * the line it sits on and reported at once, as one UserError, so nothing is
 * fitted from a file that is partly wrong.
 *
 * Numbers are read with JavaScript's own decimal conversion, which is exact
 * for the shortest round-trip representations `export` writes, so a dataset
 * read back is bit-identical to the one simulated (the fit's start seeds
 * depend on those bits).
 */
import { readFileSync } from 'node:fs';
import { parse } from 'csv-parse/sync';
import type { Dataset } from '../observer/observer.js';
import { UserError } from '../cli/userError.js';

export interface DataColumns {
  participant: string;
  condition: string;
  stimulus: string;
  response: string;
}

export const DEFAULT_COLUMNS: DataColumns = { participant: 'participant', condition: 'condition', stimulus: 'stimulus', response: 'response' };

export interface DataRules {
  columns: DataColumns;
  /** Condition names in scenario order; a trial's condition index is its position here. */
  conditions: readonly string[];
  /** Response scale: every response must lie in [lower, upper]. */
  lower: number;
  upper: number;
  /** Fewest trials a participant may have. */
  minTrials: number;
}

export interface ParticipantData {
  participant: string;
  data: Dataset;
}

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const MAX_LISTED = 25;

/** A plain decimal number, or null (no hex, no empty strings, no 'Infinity'). */
export function parseDecimal(text: string | undefined): number | null {
  if (text === undefined || !DECIMAL.test(text)) return null;
  const x = Number(text);
  return Number.isFinite(x) ? x : null;
}

export function problemList(source: string, problems: readonly string[]): string {
  const shown = problems.slice(0, MAX_LISTED).map((p) => `  - ${p}`);
  if (problems.length > MAX_LISTED) shown.push(`  - … and ${problems.length - MAX_LISTED} more`);
  return `${source} has ${problems.length} problem${problems.length > 1 ? 's' : ''}:\n${shown.join('\n')}`;
}

/** Rows of a CSV with a header, each with the line number it starts on. */
export function readCsvRows(path: string, what: string): { header: string[]; rows: { line: number; cells: Record<string, string> }[] } {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch {
    throw new UserError(`cannot read the ${what} '${path}': no such file or not readable`);
  }
  let header: string[] = [];
  let records: { info: { lines: number }; record: Record<string, string> }[];
  try {
    records = parse(text, {
      columns: (h: string[]) => (header = h.map((c) => c.trim())),
      skip_empty_lines: true,
      trim: true,
      info: true,
      bom: true,
    }) as unknown as { info: { lines: number }; record: Record<string, string> }[];
  } catch (e) {
    throw new UserError(`${path}: not a readable CSV file (${(e as Error).message})`);
  }
  return { header, rows: records.map((r) => ({ line: r.info.lines, cells: r.record })) };
}

export function readParticipantData(path: string, rules: DataRules): ParticipantData[] {
  const { header, rows } = readCsvRows(path, 'data file');
  const { columns } = rules;
  const single = rules.conditions.length === 1;
  const missing = (['participant', 'stimulus', 'response', 'condition'] as const).filter(
    (c) => !header.includes(columns[c]) && !(c === 'condition' && single),
  );
  if (missing.length)
    throw new UserError(
      `${path}: the header lacks the column${missing.length > 1 ? 's' : ''} ${missing.map((c) => `'${columns[c]}' (${c})`).join(', ')}; found: ${header.join(', ') || 'nothing'}. Name the columns with --participant-column, --condition-column, --stimulus-column, --response-column or in the scenario's data section.`,
    );
  if (!rows.length) throw new UserError(`${path}: the data file has a header but no trials`);
  const problems: string[] = [];
  const byParticipant = new Map<string, { stimulus: number[]; condition: number[]; response: number[]; firstLine: number }>();
  for (const { line, cells } of rows) {
    const id = cells[columns.participant] ?? '';
    if (id === '') problems.push(`line ${line}: participant is empty`);
    const stimulus = parseDecimal(cells[columns.stimulus]);
    if (stimulus === null) problems.push(`line ${line}: stimulus '${cells[columns.stimulus] ?? ''}' is not a number`);
    const response = parseDecimal(cells[columns.response]);
    const inRange = response !== null && response >= rules.lower && response <= rules.upper;
    if (response === null) problems.push(`line ${line}: response '${cells[columns.response] ?? ''}' is not a number`);
    else if (!inRange) problems.push(`line ${line}: response ${response} lies outside the response range [${rules.lower}, ${rules.upper}] of the scenario`);
    const conditionName = header.includes(columns.condition) ? cells[columns.condition] ?? '' : rules.conditions[0];
    const condition = rules.conditions.indexOf(conditionName);
    if (condition < 0) problems.push(`line ${line}: unknown condition '${conditionName}' (the scenario has: ${rules.conditions.join(', ')})`);
    if (id === '' || stimulus === null || response === null || !inRange || condition < 0) continue;
    const p = byParticipant.get(id) ?? { stimulus: [], condition: [], response: [], firstLine: line };
    p.stimulus.push(stimulus);
    p.condition.push(condition);
    p.response.push(response);
    byParticipant.set(id, p);
  }
  for (const [id, p] of byParticipant) {
    if (p.stimulus.length < rules.minTrials)
      problems.push(`participant '${id}' (first seen on line ${p.firstLine}) has ${p.stimulus.length} valid trial${p.stimulus.length === 1 ? '' : 's'}; at least ${rules.minTrials} are needed (--min-trials)`);
  }
  if (problems.length) throw new UserError(problemList(path, problems));
  return [...byParticipant.entries()].map(([participant, p]) => ({
    participant,
    data: { stimulus: Float64Array.from(p.stimulus), condition: Int32Array.from(p.condition), response: Float64Array.from(p.response) },
  }));
}
