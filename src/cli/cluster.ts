/**
 * `lossprobe cluster SCENARIO --shards N`: writes ready-to-submit Slurm
 * scripts that run the study's recovery plan (or, with --fit-data, a fit of
 * participants' data) as an N-task array job and merge
 * the shards in a dependent job (src/cluster/slurmScripts.ts), and prints how
 * to submit them. The study is resolved here first, so a bad scenario or flag
 * is caught on the login node, not in N queued tasks.
 */
import { chmodSync, mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { slurmScripts } from '../cluster/slurmScripts.js';
import { writeFileAtomically } from '../engine/atomicFile.js';
import { planJobs } from '../engine/plan.js';
import { shardGlob } from '../engine/shard.js';
import { fitParticipants } from './fit.js';
import { studyFromFlags } from './run.js';
import { sweepFolder, sweepFromFlags, type SizeFlags } from './size.js';
import { sweepFlags } from './sizeRound.js';
import { roundFolder } from '../engine/roundPlanFile.js';
import { firstRound, roundJobs } from '../engine/sizeRounds.js';
import { UserError } from './userError.js';

export interface ClusterFlags extends Pick<SizeFlags, 'observers' | 'trials' | 'seed' | 'maxObservers' | 'batch' | 'target' | 'parameter' | 'exclude' | 'width' | 'roundPlan'> {
  /** Shard round 1 of a trial-count sweep (`size`); --round-plan shards a later round. */
  size?: boolean;
  /** With a sweep: each round's merge job writes and submits the next round itself. */
  follow?: boolean;
  shards: string;
  partition?: string;
  account?: string;
  time: string;
  cpus: string;
  out?: string;
  /** Shard `fit` of this data file instead of a recovery study (`run`). */
  fitData?: string;
}

function wholeNumber(flag: string, v: string, max: number): number {
  const n = Number(v);
  if (!Number.isInteger(n) || n < 1 || n > max) throw new UserError(`--${flag} expects a whole number from 1 to ${max} (got '${v}')`);
  return n;
}

/** Slurm's time formats: minutes, MM:SS, HH:MM:SS, D-HH, D-HH:MM, D-HH:MM:SS (sbatch(1), --time). */
const SLURM_TIME = /^(\d+|\d+:\d\d|\d+:\d\d:\d\d|\d+-\d+|\d+-\d+:\d\d|\d+-\d+:\d\d:\d\d)$/;
/** Partition and account names go into #SBATCH lines unquoted. */
const SLURM_NAME = /^[A-Za-z0-9_.,-]+$/;

export function clusterCommand(file: string, flags: ClusterFlags, toolVersion: string): void {
  let shards = wholeNumber('shards', flags.shards, 10_000);
  const cpus = wholeNumber('cpus', flags.cpus, 1024);
  if (!SLURM_TIME.test(flags.time)) throw new UserError(`--time expects a Slurm time limit: minutes, HH:MM:SS or D-HH:MM:SS, e.g. 90, 02:00:00 or 1-12:00:00 (got '${flags.time}')`);
  for (const flag of ['partition', 'account'] as const) {
    const v = flags[flag];
    if (v !== undefined && !SLURM_NAME.test(v)) throw new UserError(`--${flag} expects a Slurm ${flag} name of letters, digits and _ . , - (got '${v}')`);
  }
  const fitData = flags.fitData;
  if (fitData !== undefined && (flags.observers !== undefined || flags.trials !== undefined || flags.seed !== undefined))
    throw new UserError('--fit-data shards a fit of participants\' data; --observers, --trials and --seed belong to a recovery study and cannot be combined with it');
  const sweeping = flags.size || flags.roundPlan !== undefined;
  const sweepOnly = (['maxObservers', 'batch', 'target', 'parameter', 'exclude', 'width'] as const).filter((k) => flags[k] !== undefined);
  if (!sweeping && sweepOnly.length) throw new UserError(`${sweepOnly.map((k) => `--${k.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}`).join(', ')} belong${sweepOnly.length > 1 ? '' : 's'} to a trial-count sweep; add --size (round 1) or --round-plan FILE (a later round)`);
  if (sweeping && fitData !== undefined) throw new UserError('--fit-data shards a fit; --size and --round-plan shard a trial-count sweep; choose one');
  if (flags.follow && !sweeping) throw new UserError('--follow chains the rounds of a trial-count sweep; add --size (or --round-plan FILE)');
  const job = sweeping ? sweepJob(file, flags) : studyJob(file, flags, fitData);
  const { jobs } = job;
  // A later round may be small; its scripts (written by hand or by a --follow merge job) use fewer shards rather than fail.
  if (flags.roundPlan !== undefined && shards > jobs) {
    console.log(`Round ${job.round} has only ${jobs} job${jobs > 1 ? 's' : ''}: ${jobs} shard${jobs > 1 ? 's' : ''} instead of ${shards}.`);
    shards = jobs;
  }
  if (shards > jobs) throw new UserError(`--shards ${shards} exceeds the ${job.round ? `round's` : `study's`} ${jobs} jobs; some array tasks would have nothing to do (use at most ${jobs})`);
  const out = resolve(flags.out ?? job.defaultOut);
  // Slurm reads the log paths from #SBATCH lines, where blanks split words and % starts a pattern.
  if (/[\s%'"\\]/.test(out)) throw new UserError(`--out ${out}: the run folder's path must not contain blanks, quotes, backslashes or '%' (Slurm reads it from #SBATCH lines); choose another folder`);
  const shardBase = job.round ? roundFolder(out, job.round) : out;
  const scripts = slurmScripts({
    toolVersion,
    command: job.command,
    name: job.name,
    scenarioHash: job.hash,
    seed: job.seed,
    jobs,
    shards,
    shardBase,
    round: job.round,
    follow: flags.follow
      ? ['--shards', flags.shards, '--cpus', flags.cpus, '--time', flags.time, ...(flags.partition ? ['--partition', flags.partition] : []), ...(flags.account ? ['--account', flags.account] : [])]
      : undefined,
    cpus,
    time: flags.time,
    partition: flags.partition,
    account: flags.account,
    node: process.execPath,
    cli: resolve(process.argv[1]),
    scenario: resolve(file),
    studyFlags: job.studyFlags,
    out,
  });
  const dir = join(shardBase, 'slurm');
  try {
    // Slurm does not create the folders of --output paths; a missing one loses the task's log.
    mkdirSync(join(shardBase, 'logs'), { recursive: true });
    mkdirSync(dir, { recursive: true });
    for (const [name, text] of Object.entries(scripts)) writeFileAtomically(join(dir, name), text);
    chmodSync(join(dir, 'submit.sh'), 0o755);
  } catch (e) {
    throw new UserError(`cannot write the Slurm scripts into ${dir}: ${(e as Error).message}`);
  }
  const perShard = Math.ceil(jobs / shards);
  console.log(`Slurm scripts for '${job.name}'${job.round ? `, round ${job.round} of its trial-count sweep` : ''} (${jobs} jobs in ${shards} shards of up to ${perShard}; ${cpus} cores and ${flags.time} per task) in ${dir}/:`);
  console.log(`  array.sbatch  array task K runs shard K into ${join(shardBase, shardGlob(shards).replace('*', 'K'))}`);
  console.log(`  merge.sbatch  joins the shards into ${out}/ (summary.json, CSV files${job.round ? `; and, if another round is needed, its plan ${join(out, `round-${job.round + 1}`, 'plan.json')}` : ''})`);
  console.log('  submit.sh     queues the array, then the merge to start once every task has ended');
  console.log(`Submit from a login node of the cluster (same files and paths):\n  bash ${join(dir, 'submit.sh')}`);
  if (job.round && flags.follow) console.log(`--follow: when the merge planned another round, the merge job writes its scripts into ${join(out, `round-${job.round + 1}`, 'slurm')}/ and submits them, until no round is needed; each round's merge log (${join(out, 'round-R', 'logs', 'merge.log')}) says what it decided. Your cluster must allow sbatch inside a job.`);
  else if (job.round) console.log(`When the merge has ended, its log (${join(shardBase, 'logs', 'merge.log')}) says whether another round is needed and gives the \`lossprobe cluster … --round-plan\` command that writes its scripts (or write the scripts with --follow to have each merge job go on by itself).`);
  console.log(`Logs: ${join(shardBase, 'logs')}/shard-K.log and merge.log. If task K fails or hits its time limit, resubmit it (it resumes where it stopped) and merge again:`);
  console.log(`  sbatch --array=K ${join(dir, 'array.sbatch')}\n  sbatch ${join(dir, 'merge.sbatch')}`);
  if (shards > 1000) console.log('Note: many clusters cap array indices at 1000 (MaxArraySize); ask your administrators or use fewer shards.');
}

interface ClusterJob {
  command: string;
  name: string;
  hash: string;
  seed: number;
  jobs: number;
  studyFlags: string[];
  defaultOut: string;
  /** The sweep round the scripts run (size only). */
  round?: number;
}

/** A recovery study (run) or, with --fit-data, a fit of participants' data. */
function studyJob(file: string, flags: ClusterFlags, fitData: string | undefined): ClusterJob {
  const study = studyFromFlags(file, flags);
  // A fit's plan is one job per participant; reading the data here catches a bad file before N tasks queue.
  const jobs = fitData !== undefined ? fitParticipants(study, fitData).length : planJobs(study).length;
  return {
    command: fitData !== undefined ? 'fit' : 'run',
    name: study.scenario.name,
    hash: study.hash,
    seed: study.scenario.seed,
    jobs,
    studyFlags: fitData !== undefined ? ['--data', resolve(fitData)] : [
      ...(flags.observers !== undefined ? ['--observers', flags.observers] : []),
      ...(flags.trials !== undefined ? ['--trials', flags.trials] : []),
      ...(flags.seed !== undefined ? ['--seed', flags.seed] : []),
    ],
    defaultOut: join('results', fitData !== undefined ? `${study.scenario.name}-fit` : study.scenario.name),
  };
}

/** One round of a trial-count sweep: round 1 from the size flags, a later one from its plan file. */
function sweepJob(file: string, flags: ClusterFlags): ClusterJob {
  const sweep = sweepFromFlags(file, flags);
  const plan = sweep.plan ?? firstRound(sweep.designs, sweep.settings);
  const base = sweep.designs[0].study;
  return {
    command: 'size',
    name: base.scenario.name,
    hash: sweep.record.sweepHash,
    seed: base.scenario.seed,
    jobs: roundJobs(plan).length,
    studyFlags: flags.roundPlan !== undefined ? ['--round-plan', resolve(flags.roundPlan)] : sweepFlags(sweep.settings),
    defaultOut: sweepFolder(sweep, flags),
    round: plan.round,
  };
}
