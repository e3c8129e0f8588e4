/** Tidy CSV text: RFC 4180 quoting, empty cells for null and non-finite numbers. */
export function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  const s = String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export const csvTable = (header: string[], rows: unknown[][]): string => [header.join(','), ...rows.map((r) => r.map(csvCell).join(','))].join('\n') + '\n';
