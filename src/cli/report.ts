/** `lossprobe report RUN_FOLDER`: (re)write report.html and figures/*.svg from a run folder. */
import { writeReport } from '../report/html/writeReport.js';

export async function reportCommand(folder: string): Promise<void> {
  const r = await writeReport(folder);
  for (const p of r.problems) process.stderr.write(`lossprobe: report: ${p}\n`);
  console.log(`Report: ${r.path} (${r.figures.length} figures in ${folder}/figures/)`);
}
