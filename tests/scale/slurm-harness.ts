/**
 * A real single-node Slurm for tests, as ../../shared/STANDARDS.md describes it (Debian 12's
 * slurmctld, slurmd, slurm-client and munge; Slurm 22.05): slurm.conf and every state, spool,
 * pid and log path under a temporary folder, its own munged socket there (AuthInfo=socket=…),
 * free ports, daemons started in the foreground and stopped by their PIDs.
 *
 * Needs root (slurmd runs jobs as the submitting user, SlurmUser=root) and the packages;
 * without them start() throws saying what is missing — the test fails, it is never skipped.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { chmodSync, chownSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { createServer } from 'node:net';
import path from 'node:path';

const NODE = 'bwnode';
const PARTITION = 'bwtest';

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
  });
}

export interface SlurmCluster {
  conf: string;
  /** process.env plus SLURM_CONF, for every client call. */
  env: NodeJS.ProcessEnv;
  partition: string;
  /** Run a client command (sbatch, squeue, …) and return its stdout; throws on a non-zero status. */
  client(command: string, args: string[]): string;
  /** Logs of the daemons, for failure messages. */
  logs(): string;
  stop(): Promise<void>;
}

function need(binary: string): string {
  for (const dir of ['/usr/sbin', '/usr/bin', '/sbin', '/bin']) if (existsSync(path.join(dir, binary))) return path.join(dir, binary);
  throw new Error(
    `${binary} not found: install Debian's Slurm and munge (apt-get install -y --no-install-recommends slurmctld slurmd slurm-client munge; .ci/run does this)`,
  );
}

function idOf(flag: '-u' | '-g', user: string): number {
  const r = spawnSync('id', [flag, user], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`no user '${user}' (the munge package creates it): ${r.stderr.trim()}`);
  return Number(r.stdout.trim());
}

/** Stop a child by PID with SIGTERM, then SIGKILL after graceMs. */
async function stopChild(child: ChildProcess, graceMs = 5000): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null || child.pid === undefined) return;
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  process.kill(child.pid, 'SIGTERM');
  const timer = setTimeout(() => {
    if (child.exitCode === null && child.signalCode === null && child.pid !== undefined) process.kill(child.pid, 'SIGKILL');
  }, graceMs);
  await exited;
  clearTimeout(timer);
}

/** Start munged, slurmctld and slurmd in a fresh temporary folder (removed again by stop()). */
export async function startSlurm(cpus = 4): Promise<SlurmCluster> {
  if (process.getuid?.() !== 0) throw new Error('the Slurm test runs slurmd as root (SlurmUser=root, STANDARDS.md); this process is not root');
  const slurmctld = need('slurmctld');
  const slurmd = need('slurmd');
  const munged = need('munged');
  need('sbatch');
  const key = '/etc/munge/munge.key';
  if (!existsSync(key)) throw new Error(`${key} missing: create it with mungekey --create (STANDARDS.md)`);
  const uid = idOf('-u', 'munge');
  const gid = idOf('-g', 'munge');
  // its own folder, traversable by user munge (a test's mkdtemp folder is 0700)
  const dir = mkdtempSync(path.join(tmpdir(), 'bw-slurmd-'));
  for (const d of ['state', 'spool', 'log', 'munge']) mkdirSync(path.join(dir, d), { recursive: true });
  const mungeDir = path.join(dir, 'munge');
  chownSync(mungeDir, uid, gid);
  chmodSync(mungeDir, 0o755); // munged: "execute permissions for all required" on the socket's folder
  chmodSync(dir, 0o755);
  const socket = path.join(mungeDir, 'munge.socket');
  const [ctldPort, dPort] = [await freePort(), await freePort()];
  const conf = path.join(dir, 'slurm.conf');
  writeFileSync(
    conf,
    [
      'ClusterName=bwtest',
      'SlurmctldHost=localhost(127.0.0.1)',
      `SlurmctldPort=${ctldPort}`,
      `SlurmdPort=${dPort}`,
      'AuthType=auth/munge',
      'CredType=cred/munge',
      `AuthInfo=socket=${socket}`,
      'SlurmUser=root',
      'SlurmdUser=root',
      `StateSaveLocation=${dir}/state`,
      `SlurmdSpoolDir=${dir}/spool`,
      `SlurmctldPidFile=${dir}/slurmctld.pid`,
      `SlurmdPidFile=${dir}/slurmd.pid`,
      `SlurmctldLogFile=${dir}/log/slurmctld.log`,
      `SlurmdLogFile=${dir}/log/slurmd.log`,
      'ProctrackType=proctrack/linuxproc',
      'TaskPlugin=task/none',
      'JobAcctGatherType=jobacct_gather/none',
      'AccountingStorageType=accounting_storage/none',
      'MailProg=/bin/true',
      'SchedulerParameters=batch_sched_delay=0',
      'SelectType=select/cons_tres',
      'SelectTypeParameters=CR_Core',
      'SlurmdParameters=config_overrides',
      'ReturnToService=2',
      'MpiDefault=none',
      `NodeName=${NODE} NodeAddr=127.0.0.1 CPUs=${cpus} RealMemory=4000 State=UNKNOWN`,
      `PartitionName=${PARTITION} Nodes=${NODE} Default=YES MaxTime=INFINITE State=UP`,
      '',
    ].join('\n'),
  );
  const env = { ...process.env, SLURM_CONF: conf };
  const children: ChildProcess[] = [];
  const log = (name: string) => path.join(dir, 'log', name);
  const daemon = (bin: string, args: string[], out: string, opts: { uid?: number; gid?: number } = {}) => {
    const child = spawn(bin, args, { env, stdio: ['ignore', 'pipe', 'pipe'], ...opts });
    let text = '';
    child.stdout!.on('data', (d) => (text += d));
    child.stderr!.on('data', (d) => (text += d));
    child.on('exit', () => writeFileSync(log(out), text));
    children.push(child);
    return child;
  };
  const stop = async () => {
    for (const c of [...children].reverse()) await stopChild(c);
    rmSync(dir, { recursive: true, force: true });
  };
  try {
    // munged in the foreground as user munge, with its own socket, pid, seed and log under dir
    daemon(
      munged,
      [
        '--foreground',
        `--socket=${socket}`,
        `--pid-file=${mungeDir}/munged.pid`,
        `--log-file=${mungeDir}/munged.log`,
        `--seed-file=${mungeDir}/munged.seed`,
        `--key-file=${key}`,
      ],
      'munged.out',
      { uid, gid },
    );
    await waitFor(() => existsSync(socket), 10_000, 'munged socket');
    daemon(slurmctld, ['-D', '-i', '-f', conf], 'slurmctld.out');
    daemon(slurmd, ['-D', '-N', NODE, '-f', conf], 'slurmd.out');
    const idle = () => {
      const r = spawnSync('sinfo', ['-h', '-n', NODE, '-o', '%T'], { env, encoding: 'utf8' });
      return r.status === 0 && r.stdout.trim() === 'idle';
    };
    await waitFor(idle, 30_000, `node ${NODE} idle in sinfo`);
  } catch (e) {
    const logs = readLogs(dir);
    await stop();
    throw new Error(`${(e as Error).message}\n${logs}`, { cause: e });
  }
  return {
    conf,
    env,
    partition: PARTITION,
    client(command, args) {
      const r = spawnSync(command, args, { env, encoding: 'utf8' });
      if (r.status !== 0) throw new Error(`${command} ${args.join(' ')}: exit ${r.status}: ${r.stderr.trim()}`);
      return r.stdout;
    },
    logs: () => readLogs(dir),
    stop,
  };
}

function readLogs(dir: string): string {
  return ['slurmctld.log', 'slurmd.log', 'slurmctld.out', 'slurmd.out', 'munged.out', '../munge/munged.log']
    .map((f) => path.join(dir, 'log', f))
    .filter(existsSync)
    .map((f) => `--- ${path.basename(f)} (last lines)\n${readFileSync(f, 'utf8').split('\n').slice(-15).join('\n')}`)
    .join('\n');
}

export async function waitFor(done: () => boolean, timeoutMs: number, what: string, everyMs = 250): Promise<void> {
  const t0 = Date.now();
  while (!done()) {
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out after ${timeoutMs / 1000} s waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}
