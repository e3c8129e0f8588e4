/**
 * Assemble the report: run every section that applies, in order, and put
 * the page together with its style and the embedded raw data. No scripts,
 * fonts or images from elsewhere: the file opens offline anywhere.
 */
import { ReportContext, escapeHtml, type Figure } from './context.js';
import type { EmbeddedData, ReportData } from './data.js';
import { SECTIONS } from './sections/index.js';
import type { Section } from './section.js';
import { CSS } from './style.js';

/** JSON safe inside a <script> element: "<" never appears, so "</script>" cannot close it early. */
export function scriptJson(value: unknown): string {
  return JSON.stringify(value).replace(/</g, '\\u003c').replace(/\u2028/g, '\\u2028').replace(/\u2029/g, '\\u2029');
}

export interface BuiltReport {
  html: string;
  figures: Figure[];
  sections: string[];
  /** Sections that failed to render (shown on the page as a note). */
  problems: string[];
}

/** The page of a run folder: its sections, with summary.json, scenario.json and the report's settings embedded. */
export async function buildReport(data: ReportData, sections: readonly Section[] = SECTIONS): Promise<BuiltReport> {
  const embedded: EmbeddedData = { summary: data.summary, scenario: data.scenario, report: data.settings };
  return buildPage(new ReportContext(data, embedded), sections, `${data.summary.name}: lossprobe report`);
}

/** Any page: run the sections that apply, in order, and wrap them with the style and the embedded raw data. */
export async function buildPage<D>(ctx: ReportContext<D>, sections: readonly Section<D>[], title: string): Promise<BuiltReport> {
  const used = sections.filter((s) => s.applies(ctx.data));
  const blocks: { html: string; half: boolean }[] = [];
  const problems: string[] = [];
  for (const s of used) {
    let body: string;
    try {
      body = await s.render(ctx);
    } catch (e) {
      // One section that cannot be drawn (e.g. a summary written by a newer command) must not cost the whole report.
      problems.push(`section '${s.id}': ${(e as Error).message}`);
      body = `<p class="note section-failed">This section could not be drawn: ${escapeHtml((e as Error).message)}</p>`;
    }
    const html = s.title ? `<section id="${s.id}"><h2>${escapeHtml(s.title)}</h2>\n${body}\n</section>` : body;
    blocks.push({ html, half: s.width === 'half' });
  }
  // A contents line after the untitled header block, for pages long enough to scroll.
  const titled = used.filter((s) => s.title);
  const nav = titled.length > 3 ? `<nav class="contents" aria-label="Contents">${titled.map((s) => `<a href="#${s.id}">${escapeHtml(s.title)}</a>`).join('')}</nav>` : '';
  if (nav) {
    const firstTitled = used.findIndex((s) => s.title);
    blocks.splice(firstTitled, 0, { html: nav, half: false });
  }
  // Consecutive half-width sections share a row.
  const out: string[] = [];
  for (let i = 0; i < blocks.length; i++) {
    if (blocks[i].half && blocks[i + 1]?.half) {
      out.push(`<div class="pair">\n${blocks[i].html}\n${blocks[i + 1].html}\n</div>`);
      i++;
    } else out.push(blocks[i].html);
  }
  const html = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="lossprobe">
<title>${escapeHtml(title)}</title>
<style>${CSS}</style>
</head>
<body>
${out.join('\n')}
<footer>Made by lossprobe. The raw values behind every number are embedded in this file (the lossprobe-data block).</footer>
<script type="application/json" id="lossprobe-data">${scriptJson(ctx.embedded)}</script>
</body>
</html>
`;
  return { html, figures: ctx.figures, sections: used.map((s) => s.id), problems };
}
