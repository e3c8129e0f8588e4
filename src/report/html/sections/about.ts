/** Where the numbers live: the run folder's files and the data embedded in this page. */
import type { Section } from '../section.js';
import { isRecoveryFolder } from '../data.js';

export const about: Section = {
  id: 'files',
  title: 'Files and raw values',
  applies: isRecoveryFolder,
  render() {
    return `<p>Everything in this report is recomputed from <code>jobs.jsonl</code>, one record per synthetic dataset with its true parameters, every candidate's fit and the comparison. The run folder also holds <code>scenario.json</code> (the resolved scenario), <code>summary.json</code>, tidy CSV files for R or pandas (<code>fits.csv</code>, <code>parameters.csv</code>, <code>confusion.csv</code>, <code>inversion.csv</code>) and every figure of this page as an SVG file in <code>figures/</code>, ready for a manuscript.</p>
<p>This page embeds <code>summary.json</code> and <code>scenario.json</code> unchanged (the <code>lossprobe-data</code> block of its source); each number shown carries the path of the raw value it was formatted from. Percentages are rounded to whole numbers; a share that would round to zero or to a hundred percent without being so is marked as below one or above ninety-nine percent.</p>`;
  },
};
