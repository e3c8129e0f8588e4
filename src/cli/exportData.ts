/**
 * `lossprobe export SCENARIO`: the synthetic datasets of a recovery study as
 * the tidy CSV that `fit` reads (data.csv), plus the truth (truth/truth.json)
 * in a separate folder, so fitting code under test can be given the data alone.
 * The datasets are exactly those `run` fits for the same scenario, seed and
 * flags; numbers are written in their shortest round-trip form.
 */
import { existsSync, mkdirSync, readdirSync, renameSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { planJobs } from '../engine/plan.js';
import { prefix, syntheticDataset } from '../engine/syntheticObserver.js';
import { blindIds, TRUTH_VERSION, type TruthFile, type TruthParticipant } from '../engine/truthFile.js';
import { csvTable as csv } from '../report/csv.js';
import { studyFromFlags, writeAtomically, type RunFlags } from './run.js';
import { UserError } from './userError.js';

export interface ExportFlags extends Pick<RunFlags, 'observers' | 'trials' | 'seed' | 'out' | 'overwrite' | 'quiet'> {}

export function exportCommand(file: string, flags: ExportFlags): void {
  const study = studyFromFlags(file, flags);
  const s = study.scenario;
  const folder = flags.out ?? join('results', `${s.name}-export`);
  if (existsSync(folder)) {
    const isExport = existsSync(join(folder, 'data.csv')) || readdirSync(folder).length === 0;
    if (!flags.overwrite || !isExport)
      throw new UserError(flags.overwrite ? `--overwrite refuses to delete ${folder}: it is not an export folder (no data.csv)` : `${folder} already exists; add --overwrite to replace it, or choose another folder with --out`);
    rmSync(folder, { recursive: true, force: true });
  }
  const jobs = planJobs(study);
  const ids = blindIds(jobs, s.seed);
  const rows: unknown[][] = [];
  const truth: TruthParticipant[] = [];
  const byId = [...jobs].sort((a, b) => (ids.get(a.key)! < ids.get(b.key)! ? -1 : 1));
  for (const job of byId) {
    const participant = ids.get(job.key)!;
    const { truth: values, full } = syntheticDataset(study, job.generating, job.observer);
    const data = prefix(full, job.trials);
    for (let t = 0; t < job.trials; t++) rows.push([participant, s.conditions[data.condition[t]].name, data.stimulus[t], data.response[t]]);
    truth.push({ participant, key: job.key, generating: job.generating, observer: job.observer, trials: job.trials, truth: values });
  }
  const record: TruthFile = { version: TRUTH_VERSION, kind: 'lossprobe-truth', hash: study.hash, scenario: s, participants: truth };
  // Build in a temporary folder and rename it into place: nothing half-written is ever visible.
  const tmp = `${folder}.partial-${process.pid}`;
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(join(tmp, 'truth'), { recursive: true });
  writeAtomically(join(tmp, 'data.csv'), csv(['participant', 'condition', 'stimulus', 'response'], rows));
  writeAtomically(join(tmp, 'truth', 'truth.json'), JSON.stringify(record, null, 2) + '\n');
  renameSync(tmp, folder);
  if (!flags.quiet) {
    console.log(`Exported ${truth.length} synthetic participants (${rows.length} trials) of '${s.name}' (seed ${s.seed}).`);
    console.log(`  data:  ${join(folder, 'data.csv')}  (columns participant, condition, stimulus, response; give this to the fitting code under test)`);
    console.log(`  truth: ${join(folder, 'truth', 'truth.json')}  (generating model and parameters per participant; keep it away from the fitting code)`);
    console.log(`Grade the answers with: lossprobe grade ${join(folder, 'truth', 'truth.json')} --fits FITS.csv`);
  }
}
