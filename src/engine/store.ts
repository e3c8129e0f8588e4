/**
 * The run folder's jobs.jsonl: the only source of truth of a run. One writer
 * (the main thread) appends one line per finished job and flushes it to disk,
 * so a killed run loses at most the line being written. On resume a
 * half-written last line is detected, cut off and its job redone.
 */
import { closeSync, existsSync, fsyncSync, openSync, readFileSync, truncateSync, writeSync } from 'node:fs';
import type { JobLine } from '../analysis/types.js';
import { UserError } from '../cli/userError.js';

export function readJobLines<Line = JobLine>(path: string): { lines: Line[]; truncatedBytes: number } {
  if (!existsSync(path)) return { lines: [], truncatedBytes: 0 };
  const text = readFileSync(path, 'utf8');
  const lines: Line[] = [];
  let good = 0;
  let pos = 0;
  while (pos < text.length) {
    const nl = text.indexOf('\n', pos);
    if (nl < 0) break; // no newline: the last line was cut short
    const chunk = text.slice(pos, nl);
    try {
      lines.push(JSON.parse(chunk) as Line);
    } catch {
      // Only the last line can be torn by a kill; damage before it is not ours to repair.
      if (nl + 1 < text.length) throw new UserError(`${path}, line ${lines.length + 1}: not a complete job record, and lines follow it; the file was edited or joined by hand (fix or remove that line, then --resume)`);
      break;
    }
    pos = nl + 1;
    good = pos;
  }
  const truncatedBytes = Buffer.byteLength(text.slice(good));
  return { lines, truncatedBytes };
}

export class JobWriter<Line = JobLine> {
  private fd: number;
  constructor(readonly path: string) {
    if (existsSync(path)) {
      const { truncatedBytes } = readJobLines(path);
      if (truncatedBytes > 0) truncateSync(path, Buffer.byteLength(readFileSync(path, 'utf8')) - truncatedBytes);
    }
    this.fd = openSync(path, 'a');
  }
  append(line: Line): void {
    writeSync(this.fd, JSON.stringify(line) + '\n');
    fsyncSync(this.fd);
  }
  close(): void {
    closeSync(this.fd);
  }
}
