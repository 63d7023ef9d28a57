/**
 * Start-up of `bandwise --help` (target: within 4× a bare `node -e 0`, issue 15): the built
 * command (dist/cli/bandwise.js, `npm run build` first) against Node doing nothing and against the
 * sources run through tsx (bin/run-ts.mjs src/cli/main.ts, its compiler cache warm), each started
 * as a new process, the kinds taken in turn within each round so that load changes hit all alike.
 * Also `npx bandwise --help` in the repository (npm's own start-up on top). Medians of the rounds.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { loadavg } from 'node:os';
import path from 'node:path';

const ROUNDS = 15;
const repo = path.resolve(import.meta.dirname, '../..');
const built = path.join(repo, 'dist', 'cli', 'bandwise.js');

const KINDS: [name: string, command: string, args: string[]][] = [
  ['node -e 0', process.execPath, ['-e', '0']],
  ['node dist/cli/bandwise.js --help', process.execPath, [built, '--help']],
  ['node bin/run-ts.mjs src/cli/main.ts --help (tsx)', process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), '--help']],
  ['npx bandwise --help', 'npx', ['--no', '--', 'bandwise', '--help']],
];

function seconds(command: string, args: string[]): number {
  const t0 = performance.now();
  const r = spawnSync(command, args, { cwd: repo, stdio: 'ignore' });
  const s = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} exited with ${r.status}`);
  return s;
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};

export async function run(): Promise<Record<string, unknown>> {
  if (!existsSync(built)) throw new Error(`no ${built}: run \`npm run build\` first`);
  for (const [, command, args] of KINDS) seconds(command, args); // warm the file cache and tsx's cache
  const times = KINDS.map(() => [] as number[]);
  const loadBefore = loadavg()[0];
  for (let round = 0; round < ROUNDS; round++) KINDS.forEach(([, command, args], k) => times[k].push(seconds(command, args)));
  const medians = times.map(median);
  const base = medians[0];
  return {
    rounds: ROUNDS,
    loadAverage1min: [Number(loadBefore.toFixed(2)), Number(loadavg()[0].toFixed(2))],
    kinds: KINDS.map(([name], k) => ({
      name,
      medianS: Number(medians[k].toFixed(3)),
      minS: Number(Math.min(...times[k]).toFixed(3)),
      maxS: Number(Math.max(...times[k]).toFixed(3)),
      timesBareNode: Number((medians[k] / base).toFixed(2)),
    })),
  };
}
