/**
 * A report section: one small file under sections/, listed once in
 * sections/index.ts. `applies` looks at what the run folder holds (a sweep,
 * sizing, variants, …), so the page shows only what the data support.
 */
import type { ReportContext } from './context.js';
import type { ReportData } from './data.js';

export interface Section<D = ReportData> {
  /** Anchor id, also the CSS hook. */
  id: string;
  /** Heading; empty for sections that bring their own (the header). */
  title: string;
  /** 'half' sections sit side by side with the next half section on wide screens. */
  width?: 'full' | 'half';
  applies(data: D): boolean;
  /** HTML of the section body. Numbers through ctx.num, names through ctx.name, figures through ctx.figure. */
  render(ctx: ReportContext<D>): string | Promise<string>;
}
