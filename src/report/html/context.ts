/**
 * The toolkit every section writes with. Numbers are never formatted by
 * hand: `num(path, style)` looks the value up in the embedded data and
 * prints it through the one formatter, marking the span with its data path
 * so a test (or a curious reader) can trace every number to its raw value.
 */
import { formatNumber, type NumberStyle } from '../format.js';
import type { ReportData } from './data.js';

export type DataPath = readonly (string | number)[];

export interface Figure {
  /** File name under figures/, e.g. "confusion.svg". */
  file: string;
  svg: string;
}

export const escapeHtml = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');

export function lookup(root: unknown, path: DataPath): unknown {
  let v: unknown = root;
  for (const k of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<string | number, unknown>)[k];
  }
  return v;
}

/** D: what the sections read (a run folder's contents by default); `embedded`: the raw values the page carries. */
export class ReportContext<D = ReportData> {
  readonly figures: Figure[] = [];
  constructor(
    readonly data: D,
    readonly embedded: object,
  ) {}

  /** The raw number at `path` (null stays null); a path that leads elsewhere is a programming error. */
  value(path: DataPath): number | null {
    const v = lookup(this.embedded, path);
    if (v === null || typeof v === 'number') return v;
    throw new Error(`report: no number at ${JSON.stringify(path)} (found ${typeof v})`);
  }

  /** A displayed number: the raw value at `path` through the one formatter, traceable by its data path. */
  num(path: DataPath, style: NumberStyle): string {
    const text = formatNumber(this.value(path), style);
    return `<span class="num" data-style="${style}" data-path="${escapeHtml(JSON.stringify(path))}">${escapeHtml(text)}</span>`;
  }

  /** A string from the data (a version, a hash), traceable like a number. */
  text(path: DataPath): string {
    const v = lookup(this.embedded, path);
    if (typeof v !== 'string') throw new Error(`report: no text at ${JSON.stringify(path)} (found ${typeof v})`);
    return `<span class="raw" data-path="${escapeHtml(JSON.stringify(path))}">${escapeHtml(v)}</span>`;
  }

  /** A name chosen by the user (model, parameter, condition): escaped and kept apart from numbers. */
  name(s: string): string {
    return `<span class="name">${escapeHtml(s)}</span>`;
  }

  /** Register a figure file (saved with the same scoped ids) and return it inline, with its caption. */
  figure(file: string, svg: string, caption: string, alt: string): string {
    const scoped = scopeIds(svg, file);
    this.figures.push({ file, svg: scoped });
    // The caption wraps to the figure's own width, so narrow figures can sit side by side.
    const width = Number(/^<svg[^>]*\swidth="([\d.]+)"/.exec(svg)?.[1]);
    const style = Number.isFinite(width) ? ` style="width: ${Math.ceil(width)}px"` : '';
    return `<figure class="fig" data-file="${escapeHtml(file)}"${style}><div class="svg" role="img" aria-label="${escapeHtml(alt)}">${scoped}</div><figcaption>${caption}</figcaption></figure>`;
  }
}

/**
 * Vega numbers clip paths from a process-wide counter ("clip1", "clip2", …),
 * so the same figure gets other ids in another process, and inline SVGs share
 * one id space. Each figure's ids are renumbered in order of appearance under
 * its file name: unique on the page, and identical bytes on every run.
 */
export function scopeIds(svg: string, file: string): string {
  const prefix = file.replace(/[^A-Za-z0-9_-]/g, '_') + '-';
  const ids = new Map<string, string>();
  for (const m of svg.matchAll(/\bid="([^"]+)"/g)) if (!ids.has(m[1])) ids.set(m[1], `${prefix}${ids.size + 1}`);
  const to = (id: string) => ids.get(id) ?? id;
  return svg
    .replace(/\bid="([^"]+)"/g, (_, id: string) => `id="${to(id)}"`)
    .replace(/url\(#([^)]+)\)/g, (_, id: string) => `url(#${to(id)})`)
    .replace(/href="#([^"]+)"/g, (_, id: string) => `href="#${to(id)}"`);
}

/** A safe file-name piece from a user-chosen name. */
export function slug(s: string): string {
  return s.replace(/[^A-Za-z0-9.-]+/g, '-').replace(/^-+|-+$/g, '') || 'x';
}
