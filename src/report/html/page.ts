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
}

export async function buildReport(data: ReportData, sections: readonly Section[] = SECTIONS): Promise<BuiltReport> {
  const embedded: EmbeddedData = { summary: data.summary, scenario: data.scenario, report: data.settings };
  const ctx = new ReportContext(data, embedded);
  const used = sections.filter((s) => s.applies(data));
  const blocks: { html: string; half: boolean }[] = [];
  for (const s of used) {
    const body = await s.render(ctx);
    const html = s.title ? `<section id="${s.id}"><h2>${escapeHtml(s.title)}</h2>\n${body}\n</section>` : body;
    blocks.push({ html, half: s.width === 'half' });
  }
  // Consecutive half-width sections share a row.
  const out: string[] = [];
  for (let i = 0; i < blocks.length; i++) {
    if (blocks[i].half && blocks[i + 1]?.half) {
      out.push(`<div class="pair">\n${blocks[i].html}\n${blocks[i + 1].html}\n</div>`);
      i++;
    } else out.push(blocks[i].html);
  }
  const title = `${data.summary.name}: lossprobe report`;
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
<footer>Made by lossprobe from the run folder's summary.json, scenario.json and jobs.jsonl.</footer>
<script type="application/json" id="lossprobe-data">${scriptJson(embedded)}</script>
</body>
</html>
`;
  return { html, figures: ctx.figures, sections: used.map((s) => s.id) };
}
