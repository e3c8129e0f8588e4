/** Where a fit's numbers live: the folder's files and the data embedded in this page. */
import type { Section } from '../section.js';
import { isFitFolder } from '../data.js';

export const fitFiles: Section = {
  id: 'files',
  title: 'Files and raw values',
  applies: isFitFolder,
  render() {
    return `<p>The fit folder holds <code>jobs.jsonl</code> (one record per participant with every candidate's fit), <code>scenario.json</code>, <code>summary.json</code>, tidy CSV files for R or pandas (<code>model-fits.csv</code>, <code>parameter-estimates.csv</code>, <code>participants.csv</code>, <code>group.csv</code>, <code>predictive-checks.csv</code>) and every figure of this page as an SVG file in <code>figures/</code>.</p>
<p>This page embeds <code>summary.json</code> and <code>scenario.json</code> unchanged (the <code>lossprobe-data</code> block of its source); each number shown carries the path of the raw value it was formatted from.</p>`;
  },
};
