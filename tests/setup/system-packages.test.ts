// `npm test` on a machine without the Debian packages the tests need (issue 15, "one command on a
// fresh machine"): as root with apt-get it installs them (as .ci/run did before, with the package
// names of Debian's archive: libedf-dev, gcc, chromium, slurmctld, slurmd, slurm-client, munge);
// otherwise it stops in one line naming exactly what to install and the command. Here the programs
// the tests use are hidden by an empty PATH, and the script runs as an unprivileged user
// (util-linux setpriv), and as root without apt-get: each must stop with that one line, exit 1,
// and install nothing.
import { spawnSync } from 'node:child_process';
import { chmodSync, copyFileSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const emptyPath = mkdtempSync(path.join(tmpdir(), 'bw-no-programs-'));
// a copy the unprivileged user can read, wherever the clone lies (a private temporary folder in CI)
const readable = mkdtempSync(path.join(tmpdir(), 'bw-setup-script-'));
chmodSync(readable, 0o755);
const script = path.join(readable, 'system-packages.mjs');
copyFileSync(path.resolve(import.meta.dirname, 'system-packages.mjs'), script);
chmodSync(script, 0o644);
afterAll(() => {
  rmSync(emptyPath, { recursive: true, force: true });
  rmSync(readable, { recursive: true, force: true });
});

// found by the program on PATH (gcc; Slurm's slurmctld, slurmd, sbatch; munged), so an empty PATH hides them
const ON_PATH = ['gcc', 'slurmctld', 'slurmd', 'slurm-client', 'munge'];

/** The packages the line names, and the ones its apt-get command installs (the same, in the same order). */
function named(line: string): string[] {
  const listed = /the Debian packages ([a-z0-9 -]+?)[:,]/.exec(line)?.[1].split(' ') ?? [];
  const command = /`apt-get install -y --no-install-recommends ([a-z0-9 -]+)`/.exec(line)?.[1].split(' ') ?? [];
  expect(command).toEqual(listed);
  return listed;
}

function runScript(prefix: string[]) {
  const argv = [...prefix, process.execPath, script];
  return spawnSync(argv[0], argv.slice(1), { encoding: 'utf8', env: { PATH: emptyPath } });
}

describe('npm test set-up: the Debian packages', () => {
  it('as an unprivileged user: one line naming the missing packages and the apt-get command, exit 1', () => {
    const r = runScript(['/usr/bin/setpriv', '--reuid=65534', '--regid=65534', '--clear-groups']);
    expect(r.status).toBe(1);
    expect(r.stdout).toBe('');
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^npm test needs the Debian packages .*: install them as root with `apt-get install /);
    expect(named(lines[0])).toEqual(expect.arrayContaining(ON_PATH));
  });

  it('as root on a machine without apt-get: the same one line, and nothing is installed', () => {
    expect(process.getuid?.()).toBe(0); // the tests run as root (the Slurm test needs it too)
    const r = runScript([]);
    expect(r.status).toBe(1);
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^npm test needs the Debian packages .*, and this machine has no apt-get: install them \(on Debian: `apt-get install /);
    expect(named(lines[0])).toEqual(expect.arrayContaining(ON_PATH));
  });
});
