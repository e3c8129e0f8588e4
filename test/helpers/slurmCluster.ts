/**
 * A throw-away single-node Slurm cluster for the scheduler test: munged,
 * slurmctld and slurmd started as children of the test from Debian's
 * slurm-wlm and munge packages (test/system/install-debian-packages.sh),
 * with every file (munge key and socket, slurm.conf, state, spool, logs) in
 * one temporary folder. Process tracking by /proc (proctrack/linuxproc) and
 * no task plugin (task/none), so neither cgroups nor systemd are needed.
 * Daemons are stopped by their own process ids, never by name.
 * Reference: Slurm documentation, slurm.conf(5), slurmctld(8), slurmd(8);
 * MUNGE documentation, munged(8).
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { closeSync, existsSync, mkdirSync, openSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { availableParallelism, hostname, totalmem } from 'node:os';
import { delimiter, join } from 'node:path';

const PROGRAMS = ['sbatch', 'squeue', 'scancel', 'sinfo', 'slurmctld', 'slurmd', 'munged'];

/** A program's path: on PATH, or in the sbin folders where Debian puts daemons. */
function which(program: string): string | null {
  const dirs = [...(process.env.PATH ?? '').split(delimiter), '/usr/sbin', '/sbin', '/usr/local/sbin'];
  for (const d of dirs) if (d && existsSync(join(d, program))) return join(d, program);
  return null;
}

/** Why the scheduler test cannot run here, or null when it can. */
export function slurmUnavailable(): string | null {
  if (process.platform !== 'linux') return 'needs Linux';
  const missing = PROGRAMS.filter((p) => !which(p));
  if (missing.length) return `Slurm not installed (missing ${missing.join(', ')}; install with test/system/install-debian-packages.sh, as root)`;
  if (process.getuid?.() !== 0) return 'needs root to start slurmd';
  return null;
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as { port: number };
      srv.close(() => resolve(port));
    });
  });
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function waitFor(what: string, ok: () => boolean, ms: number, log: () => string): Promise<void> {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (ok()) return;
    await sleep(250);
  }
  throw new Error(`timed out waiting for ${what}\n${log()}`);
}

export interface SlurmCluster {
  dir: string;
  partition: string;
  /** Environment for sbatch and friends: SLURM_CONF points at this cluster. */
  env: NodeJS.ProcessEnv;
  logs(): string;
  stop(): Promise<void>;
}

export async function startSlurm(dir: string): Promise<SlurmCluster> {
  for (const d of ['munge', 'state', 'spool', 'log']) mkdirSync(join(dir, d), { recursive: true, mode: 0o700 });
  // A munge key is random bytes (munged(8): at least 32); only the daemon reads it.
  const key = join(dir, 'munge', 'munge.key');
  writeFileSync(key, randomBytes(1024), { mode: 0o400 });
  const socket = join(dir, 'munge', 'munge.socket');
  const node = hostname().split('.')[0];
  const [ctldPort, slurmdPort] = [await freePort(), await freePort()];
  const partition = 'lossprobe';
  const conf = join(dir, 'slurm.conf');
  writeFileSync(
    conf,
    [
      'ClusterName=lossprobetest',
      `SlurmctldHost=${node}(127.0.0.1)`,
      'SlurmUser=root',
      'SlurmdUser=root',
      `SlurmctldPort=${ctldPort}`,
      `SlurmdPort=${slurmdPort}`,
      'AuthType=auth/munge',
      'CredType=cred/munge',
      `AuthInfo=socket=${socket}`,
      `StateSaveLocation=${join(dir, 'state')}`,
      `SlurmdSpoolDir=${join(dir, 'spool')}`,
      `SlurmctldPidFile=${join(dir, 'slurmctld.pid')}`,
      `SlurmdPidFile=${join(dir, 'slurmd.pid')}`,
      `SlurmctldLogFile=${join(dir, 'log', 'slurmctld.log')}`,
      `SlurmdLogFile=${join(dir, 'log', 'slurmd.log')}`,
      'ProctrackType=proctrack/linuxproc',
      'TaskPlugin=task/none',
      'JobAcctGatherType=jobacct_gather/none',
      'AccountingStorageType=accounting_storage/none',
      'JobCompType=jobcomp/none',
      'MpiDefault=none',
      'SwitchType=switch/none',
      'SchedulerType=sched/backfill',
      'SelectType=select/cons_tres',
      'SelectTypeParameters=CR_Core',
      'ReturnToService=2',
      // `sbatch --wait` polls every 2, 8, 32, 32… s but never longer than half of
      // MinJobAge (Slurm 22.05 sbatch.c, _job_wait; from memory, and the measured wait
      // dropped accordingly); 16 s keeps the polls at 8 s and a
      // finished array job known long enough for the merge's dependency on it.
      'MinJobAge=16',
      `NodeName=${node} NodeAddr=127.0.0.1 CPUs=${availableParallelism()} RealMemory=${Math.floor((0.9 * totalmem()) / 2 ** 20)} State=UNKNOWN`,
      `PartitionName=${partition} Nodes=${node} Default=YES MaxTime=INFINITE State=UP`,
      '',
    ].join('\n'),
  );
  const env: NodeJS.ProcessEnv = { ...process.env, SLURM_CONF: conf };
  for (const k of Object.keys(env)) if (k.startsWith('SLURM_') && k !== 'SLURM_CONF') delete env[k];
  const children: ChildProcess[] = [];
  const logs = () =>
    ['munged.out', 'slurmctld.out', 'slurmd.out', 'slurmctld.log', 'slurmd.log']
      .map((f) => join(dir, 'log', f))
      .filter(existsSync)
      .map((f) => `--- ${f}\n${readFileSync(f, 'utf8').split('\n').slice(-30).join('\n')}`)
      .join('\n');
  const daemon = (program: string, args: string[], logName: string) => {
    const out = openSync(join(dir, 'log', logName), 'a');
    // Foreground mode (-F / -D): the daemon stays our child, so its pid is the one we stop.
    const child = spawn(which(program)!, args, { env, stdio: ['ignore', out, out] });
    closeSync(out);
    children.push(child);
    return child;
  };
  const cluster: SlurmCluster = {
    dir,
    partition,
    env,
    logs,
    async stop() {
      // Cancel what is left of our jobs (only this cluster's: SLURM_CONF), then the daemons in reverse order, by pid.
      const left = spawnSync(which('squeue')!, ['-h', '-o', '%A'], { env, encoding: 'utf8', timeout: 10_000 }).stdout?.trim();
      if (left) spawnSync(which('scancel')!, left.split(/\s+/), { env, timeout: 10_000 });
      for (const child of [...children].reverse()) {
        if (child.exitCode !== null || child.signalCode !== null || child.pid === undefined) continue;
        const exited = new Promise((r) => child.once('exit', r));
        process.kill(child.pid, 'SIGTERM');
        if ((await Promise.race([exited.then(() => true), sleep(10_000).then(() => false)])) === false) process.kill(child.pid, 'SIGKILL');
      }
    },
  };
  try {
    daemon('munged', ['-F', '--force', `--socket=${socket}`, `--key-file=${key}`, `--log-file=${join(dir, 'log', 'munged.log')}`, `--pid-file=${join(dir, 'munge', 'munged.pid')}`, `--seed-file=${join(dir, 'munge', 'munged.seed')}`], 'munged.out');
    await waitFor('munged', () => existsSync(socket), 15_000, logs);
    daemon('slurmctld', ['-D', '-i'], 'slurmctld.out');
    daemon('slurmd', ['-D', '-N', node], 'slurmd.out');
    const idle = () => spawnSync(which('sinfo')!, ['-h', '-o', '%T'], { env, encoding: 'utf8', timeout: 10_000 }).stdout?.trim() === 'idle';
    await waitFor('the node to be idle', idle, 45_000, logs);
  } catch (e) {
    await cluster.stop();
    throw e;
  }
  return cluster;
}
