// A real single-node Slurm cluster for the survey tests, in a temporary folder: Debian's munge,
// slurmctld and slurmd (`apt-get install slurmctld slurmd munge`, installed by .ci/run), a munge
// key of its own, a minimal slurm.conf (one node with 2 CPUs, select/cons_tres, proctrack/linuxproc,
// no cgroups, no accounting) on free ports, each daemon started here and stopped by its pid.
// Needs root (slurmd starts jobs as their user). `slurmMissing()` says why it cannot run.

import { freePort } from '../support/freePort.js';
import { execFile, execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { chmod, mkdir, mkdtemp, rm, writeFile } from 'node:fs/promises';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { promisify } from 'node:util';

const run = promisify(execFile);

const DAEMONS = { munged: '/usr/sbin/munged', slurmctld: '/usr/sbin/slurmctld', slurmd: '/usr/sbin/slurmd' } as const;
const CLIENTS = ['sbatch', 'squeue', 'scancel', 'sinfo', 'scontrol'] as const;

function onPath(cmd: string): boolean {
  try {
    execFileSync('sh', ['-c', `command -v ${cmd}`], { stdio: 'pipe' });
    return true;
  } catch {
    return false;
  }
}

/** Why a cluster cannot be started here, or undefined. */
export function slurmMissing(): string | undefined {
  const missing = [...Object.values(DAEMONS).filter((p) => !existsSync(p)), ...CLIENTS.filter((c) => !onPath(c))];
  if (missing.length > 0) return `Slurm is not installed (missing ${missing.join(', ')}): apt-get install slurmctld slurmd munge`;
  if (process.getuid?.() !== 0) return 'the test cluster\'s slurmd must run as root';
  return undefined;
}


export interface SlurmCluster {
  readonly dir: string;
  /** The environment for Slurm's commands (SLURM_CONF). */
  readonly env: NodeJS.ProcessEnv;
  /** Runs a Slurm command; its stdout. */
  cmd(name: (typeof CLIENTS)[number], args: readonly string[]): Promise<string>;
  /** sbatch: the job id. */
  submit(script: string, args?: readonly string[]): Promise<string>;
  /** Waits until none of the job's tasks is pending or running. */
  waitDone(jobId: string, timeoutMs?: number): Promise<void>;
  stop(): Promise<void>;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function pidOf(file: string): number | undefined {
  try {
    const pid = Number(readFileSync(file, 'utf8').trim());
    return Number.isInteger(pid) && pid > 0 ? pid : undefined;
  } catch {
    return undefined;
  }
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

export async function startSlurmCluster(): Promise<SlurmCluster> {
  const dir = await mkdtemp(join(tmpdir(), 'helicord-slurm-'));
  const node = hostname().split('.')[0];
  const munge = join(dir, 'munge');
  for (const d of [munge, join(dir, 'state'), join(dir, 'spool'), join(dir, 'log')]) await mkdir(d, { recursive: true });
  await chmod(munge, 0o700);
  const key = join(munge, 'munge.key');
  await writeFile(key, randomBytes(1024), { mode: 0o400 });
  const socket = join(munge, 'munge.socket');
  const conf = join(dir, 'slurm.conf');
  const [ctldPort, dPort] = [await freePort(), await freePort()];
  await writeFile(join(dir, 'plugstack.conf'), '');
  await writeFile(conf, [
    'ClusterName=helicordtest',
    `SlurmctldHost=${node}(127.0.0.1)`,
    'SlurmUser=root', 'SlurmdUser=root',
    `SlurmctldPort=${ctldPort}`, `SlurmdPort=${dPort}`,
    'AuthType=auth/munge', `AuthInfo=socket=${socket}`, 'CredType=cred/munge',
    `StateSaveLocation=${join(dir, 'state')}`, `SlurmdSpoolDir=${join(dir, 'spool')}`,
    `SlurmctldPidFile=${join(dir, 'slurmctld.pid')}`, `SlurmdPidFile=${join(dir, 'slurmd.pid')}`,
    `SlurmctldLogFile=${join(dir, 'log', 'slurmctld.log')}`, `SlurmdLogFile=${join(dir, 'log', 'slurmd.log')}`,
    'ProctrackType=proctrack/linuxproc', 'TaskPlugin=task/none',
    'SelectType=select/cons_tres', 'SelectTypeParameters=CR_CPU',
    'JobAcctGatherType=jobacct_gather/none', 'AccountingStorageType=accounting_storage/none', 'JobCompType=jobcomp/none',
    'MpiDefault=none', 'ReturnToService=2', 'SchedulerType=sched/backfill',
    'KillWait=5', 'InactiveLimit=0', 'MinJobAge=300',
    `PlugStackConfig=${join(dir, 'plugstack.conf')}`,
    `NodeName=${node} NodeAddr=127.0.0.1 CPUs=2 State=UNKNOWN`,
    'PartitionName=main Nodes=ALL Default=YES MaxTime=INFINITE State=UP',
    '',
  ].join('\n'));
  const env = { ...process.env, SLURM_CONF: conf };
  const pids = { munged: join(munge, 'munged.pid'), slurmctld: join(dir, 'slurmctld.pid'), slurmd: join(dir, 'slurmd.pid') };

  const cmd = async (name: string, args: readonly string[]) => (await run(name, [...args], { env })).stdout;
  const stop = async () => {
    // Jobs first, then the daemons we started, each by its own pid.
    await cmd('scancel', ['--full', '--user=root']).catch(() => undefined);
    for (const file of [pids.slurmd, pids.slurmctld, pids.munged]) {
      const pid = pidOf(file);
      if (pid === undefined || !alive(pid)) continue;
      process.kill(pid, 'SIGTERM');
      for (let i = 0; i < 100 && alive(pid); i++) await sleep(100);
      if (alive(pid)) process.kill(pid, 'SIGKILL');
    }
    await rm(dir, { recursive: true, force: true });
  };

  try {
    await run(DAEMONS.munged, ['--force', `--key-file=${key}`, `--socket=${socket}`, `--pid-file=${pids.munged}`,
      `--log-file=${join(munge, 'munged.log')}`, `--seed-file=${join(munge, 'munged.seed')}`]);
    await run(DAEMONS.slurmctld, ['-i', '-f', conf], { env });
    await run(DAEMONS.slurmd, ['-f', conf, '-N', node], { env });
    // The node is ready when the controller says it is idle.
    const deadline = Date.now() + 60_000;
    for (;;) {
      const state = await cmd('sinfo', ['-h', '-o', '%T']).catch(() => '');
      if (state.trim() === 'idle') break;
      if (Date.now() > deadline) throw new Error(`the test cluster's node did not become idle (sinfo says "${state.trim()}"); logs in ${join(dir, 'log')}`);
      await sleep(250);
    }
  } catch (e) {
    const log = ['slurmctld.log', 'slurmd.log'].map((f) => join(dir, 'log', f)).filter(existsSync).map((f) => readFileSync(f, 'utf8').split('\n').slice(-15).join('\n')).join('\n');
    await stop();
    throw new Error(`${(e as Error).message}\n${log}`);
  }

  return {
    dir, env, cmd, stop,
    async submit(script, args = []) {
      const out = await cmd('sbatch', ['--parsable', ...args, script]);
      return out.trim().split(';')[0];
    },
    async waitDone(jobId, timeoutMs = 300_000) {
      const deadline = Date.now() + timeoutMs;
      for (;;) {
        const left = (await cmd('squeue', ['-h', '-j', jobId, '-o', '%T'])).trim();
        if (left === '') return;
        if (Date.now() > deadline) throw new Error(`job ${jobId} still has tasks after ${timeoutMs / 1000} s: ${left.split('\n').join(', ')}`);
        await sleep(300);
      }
    },
  };
}
