/**
 * Reading a report.html the way the tests check it: the embedded raw data,
 * the traceable number spans, and the text a reader sees.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';

export interface NumberSpan {
  style: string;
  path: (string | number)[];
  text: string;
}

export const unescapeHtml = (s: string) =>
  s.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&');

export function reportHtml(folder: string): string {
  return readFileSync(join(folder, 'report.html'), 'utf8');
}

export function embeddedData(html: string): Record<string, any> {
  const m = /<script type="application\/json" id="lossprobe-data">([\s\S]*?)<\/script>/.exec(html);
  if (!m) throw new Error('no lossprobe-data block');
  return JSON.parse(m[1]);
}

export function numberSpans(html: string): NumberSpan[] {
  return [...html.matchAll(/<span class="num" data-style="(\w+)" data-path="([^"]*)">([^<]*)<\/span>/g)].map((m) => ({
    style: m[1],
    path: JSON.parse(unescapeHtml(m[2])),
    text: unescapeHtml(m[3]),
  }));
}

export function rawSpans(html: string): { path: (string | number)[]; text: string }[] {
  return [...html.matchAll(/<span class="raw" data-path="([^"]*)">([^<]*)<\/span>/g)].map((m) => ({ path: JSON.parse(unescapeHtml(m[1])), text: unescapeHtml(m[2]) }));
}

export function at(root: unknown, path: (string | number)[]): unknown {
  return path.reduce<any>((v, k) => (v === null || v === undefined ? undefined : v[k]), root);
}

/** Visible text outside figures, with traceable spans and user-chosen names removed. */
export function untracedText(html: string): string {
  return unescapeHtml(
    html
      .replace(/<script[\s\S]*?<\/script>/g, ' ')
      .replace(/<style[\s\S]*?<\/style>/g, ' ')
      .replace(/<svg[\s\S]*?<\/svg>/g, ' ')
      .replace(/<span class="(num|raw|name)"[^>]*>[^<]*<\/span>/g, ' ')
      .replace(/<[^>]+>/g, ' '),
  );
}

/** The text of an SVG's <text> elements, one entry per line (multi-line titles are <tspan>s). */
export function svgTexts(svg: string): string[] {
  return [...svg.matchAll(/<(text|tspan)\b[^>]*>([^<]+)<\/\1>/g)].map((m) => unescapeHtml(m[2]));
}

export function methodsText(html: string): string {
  const m = /<div class="methods" id="methods-text"[^>]*>([\s\S]*?)<\/div>/.exec(html);
  if (!m) throw new Error('no methods paragraph');
  return unescapeHtml(m[1].replace(/<[^>]+>/g, '')).replace(/\s+/g, ' ');
}
