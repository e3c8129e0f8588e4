#!/usr/bin/env node
/** lossprobe command line: thin commands that parse, call and print. */
import { Command, CommanderError } from 'commander';
import { createRequire } from 'node:module';
import { UserError } from './userError.js';
import { printPreview, runPreview } from './preview.js';
import { runCommand } from './run.js';
import { planCommand } from './plan.js';
import { mergeCommand } from './merge.js';
import { clusterCommand } from './cluster.js';
import { sizeCommand } from './size.js';
import { reportCommand } from './report.js';
import { fitCommand } from './fit.js';
import { exportCommand } from './exportData.js';
import { gradeCommand } from './grade.js';

const require = createRequire(import.meta.url);
const { version } = require('../../package.json') as { version: string };

const collect = (v: string, prev: string[] = []) => [...prev, v];

async function main(argv: string[]): Promise<void> {
  const program = new Command();
  program
    .name('lossprobe')
    .description('Check whether an estimation experiment can tell which loss function a Bayesian observer minimises.')
    .version(version)
    .showHelpAfterError()
    .exitOverride();
  program
    .command('preview')
    .description('before simulating: each loss\'s estimates, which models the design can tell apart, predicted standard errors and accuracy by trial count')
    .argument('[scenario]', 'scenario file (YAML or JSON); or describe the observer with the flags below')
    .option('--prior <family:params>', 'prior, e.g. gamma:shape=3,scale=6')
    .option('--noise <family:params>', 'sensory noise of a condition (repeatable), e.g. scalar:weber=0.15', collect)
    .option('--loss <family:params>', 'candidate loss (repeatable), e.g. power:exponent=1.5', collect)
    .option('--scale <lower,upper>', 'response scale ends, e.g. 0,100')
    .option('--motor-sd <sd>', 'motor noise sd')
    .option('--out <folder>', 'output folder (default results/<name>-preview)')
    .option('--target <p>', 'accuracy the predicted trial counts aim for (default 0.8)')
    .option('--no-analytic', 'skip distinguishability, Fisher information and predicted accuracy')
    .action(async (file: string | undefined, opts) => printPreview(await runPreview(file, opts)));
  program
    .command('size')
    .description('trial-count sweep: how many trials each generating model needs to be recovered, with adaptive effort')
    .argument('<scenario>', 'scenario file (YAML or JSON); its variants are sized too')
    .option('--trials <list>', 'trial counts: a list 60,120,240 or a range 60:480:60 (default: the scenario\'s list)')
    .option('--target <p>', 'accuracy (or parameter success share) to reach, default 0.8')
    .option('--observers <n>', 'initial synthetic observers per point (default: the scenario\'s generate.observers)')
    .option('--max-observers <n>', 'cap on observers per point (default 4 × initial)')
    .option('--batch <n>', 'observers added to an undecided point per round (default: the initial number)')
    .option('--parameter <name>', 'also size for a parameter, e.g. loss.exponent (with --exclude or --width)')
    .option('--exclude <value>', 'success: the parameter\'s 95% interval excludes this value')
    .option('--width <w>', 'success: the parameter\'s 95% interval is at most this wide')
    .option('--seed <s>', 'master seed (overrides the scenario)')
    .option('--workers <w>', 'worker threads (default: all cores)')
    .option('--out <folder>', 'run folder (default results/<name>-size)')
    .option('--resume', 'continue an interrupted sweep')
    .option('--overwrite', 'replace an existing run folder')
    .option('--json', 'print summary.json to standard output instead of tables')
    .option('--quiet', 'no progress output')
    .option('--shard <K/N>', 'run only shard K of N of one round, into <out>/round-R/shard-K-of-N (join the round with merge)')
    .option('--round-plan <file>', 'with --shard: run the later round whose plan merge wrote (<out>/round-R/plan.json); it fixes the settings')
    .action(async (file: string, opts) => sizeCommand(file, opts, version));
  program
    .command('run')
    .description('recovery study: simulate synthetic observers, refit every candidate, report how often the truth comes back')
    .argument('<scenario>', 'scenario file (YAML or JSON)')
    .option('--observers <n>', 'synthetic observers per generating model (overrides the scenario)')
    .option('--trials <list>', 'trials per observer: a number, a list 60,120,240 or a range 60:480:60')
    .option('--seed <s>', 'master seed (overrides the scenario)')
    .option('--workers <w>', 'worker threads (default: all cores)')
    .option('--out <folder>', 'run folder (default results/<name>)')
    .option('--resume', 'continue a run that was interrupted')
    .option('--overwrite', 'replace an existing run folder')
    .option('--json', 'print summary.json to standard output instead of tables')
    .option('--quiet', 'no progress output')
    .option('--shard <K/N>', 'run only shard K of N of the job plan, into <out>/shard-K-of-N (join the shards with merge)')
    .action(async (file: string, opts) => runCommand(file, opts, version));
  program
    .command('plan')
    .description('size participants × trials for the planned group analysis: resample whole studies from a pool of simulated participants')
    .argument('<scenario>', 'scenario file with a plan section (YAML or JSON)')
    .option('--participants <list>', 'numbers of participants to try, e.g. 10,20,40 (overrides plan.participants)')
    .option('--trials <list>', 'trials per participant: a list 60,120,240 or a range 60:480:60 (overrides plan.trials)')
    .option('--pool <n>', 'simulated participants per population model (overrides plan.pool)')
    .option('--resamples <n>', 'simulated studies per cell (overrides plan.resamples)')
    .option('--pool-replicates <b>', "bootstrap replicates of the pool for intervals that count its sampling error; 0 turns them off (overrides plan.poolReplicates)")
    .option('--seed <s>', 'master seed (overrides the scenario)')
    .option('--workers <w>', 'worker threads for the pool fits (default: all cores)')
    .option('--out <folder>', 'run folder (default results/<name>-plan)')
    .option('--resume', 'continue an interrupted pool, or reuse a finished one with new grid settings')
    .option('--overwrite', 'replace an existing run folder')
    .option('--shard <K/N>', 'fit only shard K of N of the pool (for cluster array jobs); no resampling')
    .option('--json', 'print summary.json to standard output instead of tables')
    .option('--quiet', 'no progress output')
    .action(async (file: string, opts) => planCommand(file, opts, version));
  program
    .command('fit')
    .description("fit every candidate model to every participant's data; per-participant comparison and random-effects model selection")
    .argument('<scenario>', 'scenario file (YAML or JSON) with the candidate models')
    .requiredOption('--data <file>', 'tidy CSV, one row per trial: participant, condition, stimulus, response')
    .option('--participant-column <name>', "column of the participant id (default 'participant')")
    .option('--condition-column <name>', "column of the condition name (default 'condition')")
    .option('--stimulus-column <name>', "column of the stimulus (default 'stimulus')")
    .option('--response-column <name>', "column of the response (default 'response')")
    .option('--min-trials <n>', 'fewest trials a participant may have (default 20)')
    .option('--evidence <bic|cv>', 'log-evidence for random-effects selection: bic (−BIC/2, default) or cv (cross-validated log-likelihood)')
    .option('--recovery <run-folder>', "read each participant's winner against this recovery study of the same scenario")
    .option('--bootstrap <n>', "parametric bootstrap: n datasets from each participant's best and second-best fitted model, refitted")
    .option('--draws-out <file>', "write participants' fitted parameters as a parameter-draw file (for generate.drawFile)")
    .option('--draws-participants <ids>', 'only these participants (comma-separated) in --draws-out')
    .option('--workers <w>', 'worker threads (default: all cores)')
    .option('--out <folder>', 'run folder (default results/<name>-fit)')
    .option('--resume', 'continue a fit that was interrupted')
    .option('--overwrite', 'replace an existing run folder')
    .option('--shard <K/N>', 'fit only shard K of N of the participants, into <out>/shard-K-of-N (join with merge; not with --bootstrap)')
    .option('--json', 'print summary.json to standard output instead of tables')
    .option('--quiet', 'no progress output')
    .action(async (file: string, opts) => fitCommand(file, opts, version));
  program
    .command('export')
    .description('write the synthetic datasets of a recovery study as the CSV `fit` reads, with the truth in a separate file')
    .argument('<scenario>', 'scenario file (YAML or JSON)')
    .option('--observers <n>', 'synthetic observers per generating model (overrides the scenario)')
    .option('--trials <list>', 'trials per observer: a number, a list 60,120,240 or a range 60:480:60')
    .option('--seed <s>', 'master seed (overrides the scenario)')
    .option('--out <folder>', 'output folder (default results/<name>-export)')
    .option('--overwrite', 'replace an existing export folder')
    .option('--quiet', 'print nothing')
    .action((file: string, opts) => exportCommand(file, opts));
  program
    .command('grade')
    .description("score an outside fitting program's answers on exported data: confusion matrix and parameter recovery, as `run` reports them")
    .argument('<truth>', 'truth file written by export (truth/truth.json)')
    .requiredOption('--fits <file>', 'CSV of answers: participant, model (chosen), optional chosen column and parameter estimates')
    .option('--out <folder>', 'run folder (default results/<name>-grade)')
    .option('--overwrite', 'replace an existing run folder')
    .option('--json', 'print summary.json to standard output instead of tables')
    .action(async (truth: string, opts) => gradeCommand(truth, opts, version));
  program
    .command('report')
    .description('write report.html (figures, methods paragraph, cautions) and figures/*.svg for a run folder')
    .argument('<folder>', 'run folder (holds summary.json and scenario.json)')
    .action(async (folder: string) => reportCommand(folder));
  program
    .command('cluster')
    .description('write Slurm scripts that run a study as an array job of N shards plus a dependent merge job')
    .argument('<scenario>', 'scenario file (YAML or JSON)')
    .requiredOption('--shards <n>', 'number of shards, one array task each')
    .option('--partition <p>', 'Slurm partition (default: the cluster\'s default)')
    .option('--account <a>', 'Slurm account to charge (where the cluster requires one)')
    .option('--time <t>', 'time limit per array task, e.g. 90 (minutes), 02:00:00 or 1-00:00:00', '02:00:00')
    .option('--cpus <c>', 'cores per array task; each is a worker', '4')
    .option('--out <folder>', 'run folder on the cluster (default results/<name>; a sweep: results/<name>-size); scripts go to <out>/slurm (a sweep round: <out>/round-R/slurm)')
    .option('--observers <n>', 'synthetic observers per generating model (overrides the scenario; with --size: initial observers per point)')
    .option('--trials <list>', 'trials per observer: a number, a list 60,120,240 or a range 60:480:60')
    .option('--seed <s>', 'master seed (overrides the scenario)')
    .option('--fit-data <file>', "shard `fit` of this participants' CSV (one job per participant) instead of a recovery study")
    .option('--size', 'shard round 1 of a trial-count sweep (`size`) instead of a recovery study; merge then plans the next round')
    .option('--round-plan <file>', 'shard a later round of a sweep: the plan merge wrote (<out>/round-R/plan.json)')
    .option('--follow', 'with --size or --round-plan: each round\'s merge job writes and submits the next round itself, until none is needed')
    .option('--max-observers <n>', 'with --size: cap on observers per point (as size)')
    .option('--batch <n>', 'with --size: observers added to an undecided point per round (as size)')
    .option('--target <p>', 'with --size: accuracy to reach (as size)')
    .option('--parameter <name>', 'with --size: also size for a parameter (as size; with --exclude or --width)')
    .option('--exclude <value>', 'with --size and --parameter (as size)')
    .option('--width <w>', 'with --size and --parameter (as size)')
    .action((file: string, opts) => clusterCommand(file, opts, version));
  program
    .command('merge')
    .description('join the shard folders of a study (run, fit, plan or one round of size with --shard K/N) into one folder, as a single-machine run')
    .argument('<shards...>', 'shard folders (or a run folder holding them)')
    .requiredOption('--out <folder>', 'run folder to write the merged run into')
    .option('--json', 'print summary.json to standard output instead of tables')
    .action(async (folders: string[], opts) => mergeCommand(folders, opts, version));
  await program.parseAsync(argv);
}

main(process.argv).catch((e: unknown) => {
  if (e instanceof CommanderError) {
    // Commander has printed its message; help and --version are not errors.
    process.exit(e.exitCode === 0 ? 0 : 2);
  }
  if (e instanceof UserError) {
    process.stderr.write(`lossprobe: ${e.message}\n`);
    process.exit(2);
  }
  process.stderr.write(`lossprobe: internal error: ${(e as Error).stack ?? String(e)}\n`);
  process.exit(1);
});
