#!/usr/bin/env node
// Run by `npm test` before vitest: the tests need programs from outside npm. Debian packages that
// are missing are installed when this runs as root with apt-get (as on a fresh machine or in CI);
// otherwise it stops with one line naming what to install and the command that does it.
//   libedf-dev, gcc   EDF round trips through EDFlib (tests/edf/libedf.ts compiles small C programs)
//   chromium          the browser end-to-end tests (tests/e2e/harness.ts drives /usr/bin/chromium)
//   fonts-dejavu-core the font of the PNG figures (tests/figure: `bandwise figure --format png`)
//   slurmctld slurmd slurm-client munge   the single-node Slurm test (tests/scale/slurm-harness.ts)
// python3 with numpy and scipy (the reference for numeric checks) is checked, not installed: which
// python3 is on PATH, and how its packages are managed, is the machine owner's choice.
import { spawnSync } from 'node:child_process';
import { accessSync, constants, existsSync } from 'node:fs';
import path from 'node:path';

/** Whether an executable of this name is in a folder of PATH. */
function onPath(program) {
  return (process.env.PATH ?? '').split(path.delimiter).some((dir) => {
    try {
      accessSync(path.join(dir, program), constants.X_OK);
      return true;
    } catch {
      return false;
    }
  });
}

/** Each Debian package with what its presence is judged by: the file or program the tests use. */
const PACKAGES = [
  ['libedf-dev', () => existsSync('/usr/include/edflib.h')],
  ['gcc', () => onPath('gcc')],
  ['chromium', () => existsSync('/usr/bin/chromium')],
  ['fonts-dejavu-core', () => existsSync('/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf')],
  ['slurmctld', () => onPath('slurmctld')],
  ['slurmd', () => onPath('slurmd')],
  ['slurm-client', () => onPath('sbatch')],
  ['munge', () => onPath('munged')],
];

const missing = PACKAGES.filter(([, present]) => !present()).map(([name]) => name);
if (missing.length > 0) {
  const install = ['apt-get', 'install', '-y', '--no-install-recommends', ...missing];
  if (process.getuid?.() === 0 && onPath('apt-get')) {
    console.error(`npm test: installing the Debian packages the tests need: ${missing.join(' ')}`);
    const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
    for (const args of [['apt-get', 'update', '-qq'], install]) {
      const r = spawnSync(args[0], args.slice(1), { stdio: 'inherit', env });
      if (r.status !== 0) {
        console.error(`npm test: \`${args.join(' ')}\` failed (status ${r.status}); install ${missing.join(' ')} and run npm test again`);
        process.exit(1);
      }
    }
  } else {
    const command = `\`${install.join(' ')}\``;
    console.error(
      process.getuid?.() === 0
        ? `npm test needs the Debian packages ${missing.join(' ')}, and this machine has no apt-get: install them (on Debian: ${command})`
        : `npm test needs the Debian packages ${missing.join(' ')}: install them as root with ${command} (npm test run as root installs them itself)`,
    );
    process.exit(1);
  }
}

if (spawnSync('python3', ['-c', 'import numpy, scipy'], { stdio: 'ignore' }).status !== 0) {
  console.error(
    'npm test needs python3 with numpy and scipy (the reference for the numeric checks): e.g. `apt-get install -y python3-numpy python3-scipy` or `python3 -m pip install numpy scipy`',
  );
  process.exit(1);
}
