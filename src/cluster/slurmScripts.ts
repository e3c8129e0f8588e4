/**
 * The Slurm batch scripts of a sharded study: an array job (task K runs shard
 * K of N with `--resume`, using the cores Slurm gave it as workers), a merge
 * job, and a small submit script that queues the merge to start once every
 * array task has ended. Only standard sbatch directives and the environment
 * variables Slurm sets in every job (SLURM_ARRAY_TASK_ID, SLURM_CPUS_PER_TASK)
 * are used, so the scripts run on any Slurm cluster without site plugins.
 * Reference: Slurm documentation, sbatch(1) and "Job Array Support"
 * (slurm.schedmd.com/sbatch.html, slurm.schedmd.com/job_array.html).
 *
 * Pure text generation; every path given here is absolute, so the scripts work
 * whatever folder they are submitted from.
 */
import { shardGlob } from '../engine/shard.js';

export interface SlurmPlan {
  toolVersion: string;
  /** The lossprobe command whose job plan the array splits (run; plan, size and fit where they take --shard). */
  command: string;
  name: string;
  scenarioHash: string;
  seed: number;
  jobs: number;
  shards: number;
  cpus: number;
  time: string;
  partition?: string;
  account?: string;
  /** Absolute paths of node and of the lossprobe CLI that runs the shards. */
  node: string;
  cli: string;
  /** Absolute path of the scenario file and the flags that shape the study (--observers, --trials, --seed). */
  scenario: string;
  studyFlags: string[];
  /** Absolute run folder: shards go into it, the merged run is written to it. */
  out: string;
  /** Absolute folder the shard folders go into, when not `out` (a round of a sweep: <out>/round-R); logs go to its logs/. */
  shardBase?: string;
  /** A round of an adaptive sweep (size): named in the comments and job names. */
  round?: number;
  /**
   * With a round: the `lossprobe cluster` flags (shards, cores, time, partition, account) with which the
   * merge job writes and submits the next round's scripts itself, when merge planned one (cluster --follow).
   */
  follow?: string[];
}

export interface SlurmScripts {
  'array.sbatch': string;
  'merge.sbatch': string;
  'submit.sh': string;
}

/** Quote for bash: single quotes, with each embedded ' written as '\''. */
export function shellQuote(s: string): string {
  return /^[A-Za-z0-9_\/.,:=+@%-]+$/.test(s) ? s : `'${s.replace(/'/g, `'\\''`)}'`;
}

/** A job name Slurm and every shell accept: letters, digits, '-', '_' and '.'. */
function jobName(name: string): string {
  return `lp-${name.replace(/[^A-Za-z0-9_.-]+/g, '-')}`.slice(0, 64);
}

function directives(p: SlurmPlan, lines: string[]): string[] {
  return [
    ...lines,
    '#SBATCH --ntasks=1',
    `#SBATCH --time=${p.time}`,
    ...(p.partition ? [`#SBATCH --partition=${p.partition}`] : []),
    ...(p.account ? [`#SBATCH --account=${p.account}`] : []),
    // A resubmitted task appends to its log instead of replacing the first attempt's.
    '#SBATCH --open-mode=append',
  ];
}

function lossprobeLocation(p: SlurmPlan): string[] {
  return [
    '# The lossprobe that runs the study; set LOSSPROBE_NODE / LOSSPROBE_CLI when submitting to use another.',
    `node=\${LOSSPROBE_NODE:-${shellQuote(p.node)}}`,
    `cli=\${LOSSPROBE_CLI:-${shellQuote(p.cli)}}`,
  ];
}

export function slurmScripts(p: SlurmPlan): SlurmScripts {
  const out = shellQuote(p.out);
  const base = p.shardBase ?? p.out;
  const glob = shardGlob(p.shards);
  const name = p.round === undefined ? jobName(p.name) : `${jobName(p.name)}-r${p.round}`;
  const header = [
    '#!/bin/bash',
    `# Written by lossprobe ${p.toolVersion} (\`lossprobe cluster\`) for the study '${p.name}'`,
    `# (${p.round === undefined ? 'scenario' : `round ${p.round} of the sweep; sweep`} hash ${p.scenarioHash.slice(0, 16)}…, seed ${p.seed}): ${p.jobs} jobs in ${p.shards} shards.`,
  ];
  const array = [
    ...header,
    `# Array task K runs shard K of ${p.shards} into ${base}/${glob.replace('*', 'K')} (K zero-padded).`,
    '# A task that failed or hit its time limit continues where it stopped when resubmitted:',
    '#   sbatch --array=K array.sbatch',
    ...directives(p, [`#SBATCH --job-name=${name}`, `#SBATCH --array=1-${p.shards}`, `#SBATCH --cpus-per-task=${p.cpus}`, `#SBATCH --output=${base}/logs/shard-%a.log`]),
    '',
    'set -euo pipefail',
    ...lossprobeLocation(p),
    'shard="${SLURM_ARRAY_TASK_ID:?submit this script with sbatch; it runs as an array task}"',
    '# Every core Slurm gave this task is a worker.',
    'workers="${SLURM_CPUS_PER_TASK:-1}"',
    `exec "$node" "$cli" ${p.command} ${[p.scenario, ...p.studyFlags].map(shellQuote).join(' ')} --shard "$shard/${p.shards}" --out ${out} --workers "$workers" --resume`,
    '',
  ];
  const merge = [
    ...header,
    `# Joins the shards into ${p.out}: the same summary.json and CSV files as a single-machine run.`,
    ...(p.round === undefined ? [] : [`# Then says (in ${base}/logs/merge.log) whether another round is needed, and writes its plan.`]),
    '# It refuses, naming the shards to rerun, while any shard is missing or unfinished.',
    ...directives(p, [`#SBATCH --job-name=${name}-merge`, '#SBATCH --cpus-per-task=1', `#SBATCH --output=${base}/logs/merge.log`]),
    '',
    'set -euo pipefail',
    ...lossprobeLocation(p),
    ...(p.follow && p.round !== undefined ? followRound(p, base, glob) : [`exec "$node" "$cli" merge ${shellQuote(base)}/${glob} --out ${out}`]),
    '',
  ];
  const submit = [
    '#!/bin/bash',
    `# Queues the shard array of '${p.name}' (${p.shards} tasks), then the merge as a job that starts once`,
    '# every array task has ended. Arguments go to both sbatch calls (e.g. --wait to block until each ends).',
    'set -euo pipefail',
    'here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"',
    'array_id="$(sbatch --parsable "$@" "$here/array.sbatch")"',
    'array_id="${array_id%%;*}"  # --parsable prints "id" or "id;cluster"',
    `echo "Submitted the array job $array_id (${p.shards} tasks); logs in ${base}/logs/"`,
    'merge_id="$(sbatch --parsable --dependency=afterany:"$array_id" "$@" "$here/merge.sbatch")"',
    'echo "Submitted the merge job ${merge_id%%;*}; it starts when every array task has ended"',
    '',
  ];
  return { 'array.sbatch': array.join('\n'), 'merge.sbatch': merge.join('\n'), 'submit.sh': submit.join('\n') };
}

/**
 * The merge of a sweep's round that goes on by itself: merge, then, when the
 * merge wrote the next round's plan and that round has no scripts yet (so a
 * merge run again never submits a round twice), write its scripts with the
 * same cluster flags and submit them from this job.
 */
function followRound(p: SlurmPlan, base: string, glob: string): string[] {
  const out = shellQuote(p.out);
  const next = `${p.out}/round-${p.round! + 1}`;
  return [
    `"$node" "$cli" merge ${shellQuote(base)}/${glob} --out ${out}`,
    '# --follow: when the merge planned another round, write its scripts and submit them from here.',
    `next=${shellQuote(next)}`,
    'if [ -f "$next/plan.json" ] && [ ! -e "$next/slurm" ]; then',
    `  "$node" "$cli" cluster ${shellQuote(p.scenario)} --round-plan "$next/plan.json" ${p.follow!.map(shellQuote).join(' ')} --out ${out} --follow`,
    '  exec bash "$next/slurm/submit.sh"',
    'fi',
  ];
}
