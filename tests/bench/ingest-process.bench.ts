/**
 * Whole-process ingest against the plain numpy/scipy pipeline (issue 20), as a user runs it:
 * `node dist/cli/bandwise.js ingest <cohort> --out <db> --jobs 1` with default parameters (fits
 * on) started as a child process, against one python3 process running tests/bench/numpy_cohort.py
 * on the same files (numpy memmap decode + scipy.signal.welch per 30-s epoch; that file says what
 * it does and does not do). The cohort: four one-hour 19-channel 256-Hz recordings with scoring
 * files, written by the project's simulator (src/simulation) from the demo scenario cut down to
 * 2 + 2 subjects and the 19 10-20 electrodes, kept in os.tmpdir() between runs. Also one recording
 * alone (its single-recording ratio). Three rounds; in each round the four kinds run in turn, so
 * load changes hit all alike; medians of the wall times, and of the children's CPU times (from
 * /proc/self/stat: less affected by other processes on a shared machine). The 1-min load average
 * before and after. `npm run build` first. Alone: `npm run bench ingest-process`.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import { ensureCohort, DEMO_SCENARIO } from '../../src/simulation/index.ts';

const ROUNDS = 3;
const repo = path.resolve(import.meta.dirname, '../..');
const built = path.join(repo, 'dist', 'cli', 'bandwise.js');
const numpyScript = path.join(import.meta.dirname, 'numpy_cohort.py');
const dir = path.join(tmpdir(), 'bandwise-process-bench');
const ELECTRODES_19 = ['Fp1', 'Fp2', 'F7', 'F3', 'Fz', 'F4', 'F8', 'T7', 'C3', 'Cz', 'C4', 'T8', 'P7', 'P3', 'Pz', 'P4', 'P8', 'O1', 'O2'];

/** The demo scenario with 2 + 2 subjects, 19 channels, all at 256 Hz, one hour, no artifacts. */
function scenario(): unknown {
  const demo = JSON.parse(readFileSync(DEMO_SCENARIO, 'utf8'));
  return {
    ...demo,
    name: 'bandwise whole-process benchmark cohort (invented)',
    description: 'Four invented one-hour nights, 19 channels at 256 Hz, for the whole-process ingest benchmark.',
    nightMin: 60,
    channels: ELECTRODES_19,
    groups: demo.groups.map((g: Record<string, unknown>) => ({ ...g, size: 2, fsHz: 256 })),
    subjects: {},
    artifacts: [],
  };
}

/** CPU seconds (user + system) of this process's waited-for children so far, /proc/self/stat fields 16–17. */
function childrenCpuS(): number {
  const fields = readFileSync('/proc/self/stat', 'utf8').split(') ')[1].split(' ');
  // fields[0] is field 3 (state); cutime is field 16, cstime field 17; clock ticks of 1/100 s (Linux USER_HZ)
  return (Number(fields[13]) + Number(fields[14])) / 100;
}

function timed(command: string, args: string[]): { wallS: number; cpuS: number; stdout: string } {
  const c0 = childrenCpuS();
  const t0 = performance.now();
  const r = spawnSync(command, args, { encoding: 'utf8', maxBuffer: 1 << 24 });
  const wallS = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} exited with ${r.status}: ${r.stderr.slice(-2000)}`);
  return { wallS, cpuS: childrenCpuS() - c0, stdout: r.stdout };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[xs.length >> 1];
const r3 = (x: number) => Number(x.toFixed(3));

export async function run(): Promise<Record<string, unknown>> {
  if (!existsSync(built)) throw new Error(`no ${built}: run \`npm run build\` first`);
  mkdirSync(dir, { recursive: true });
  const scenarioPath = path.join(dir, 'scenario.json');
  const text = JSON.stringify(scenario(), null, 1) + '\n';
  if (!existsSync(scenarioPath) || readFileSync(scenarioPath, 'utf8') !== text) writeFileSync(scenarioPath, text);
  const cohortDir = path.join(dir, 'cohort');
  const cohort = await ensureCohort(scenarioPath, cohortDir);
  const table = readFileSync(cohort.participantsPath, 'utf8').trim().split('\n');
  const oneTable = path.join(cohortDir, 'one.tsv');
  writeFileSync(oneTable, table.slice(0, 2).join('\n') + '\n');
  const db = path.join(dir, 'bench.duckdb');
  const bandwise = (tablePath: string) => {
    rmSync(db, { force: true });
    rmSync(`${db}.wal`, { force: true });
    return timed(process.execPath, [built, 'ingest', tablePath, '--out', db, '--jobs', '1', '--quiet']);
  };
  const numpy = (files: string[]) => timed('python3', [numpyScript, ...files]);
  const kinds = {
    bandwise4: () => bandwise(cohort.participantsPath),
    numpyScipy4: () => numpy(cohort.recordings),
    bandwise1: () => bandwise(oneTable),
    numpyScipy1: () => numpy(cohort.recordings.slice(0, 1)),
  };
  // warm-up: the file cache, Python's bytecode cache
  kinds.bandwise1();
  kinds.numpyScipy1();
  const times: Record<string, { wallS: number[]; cpuS: number[] }> = {};
  const loadBefore = loadavg();
  for (let round = 0; round < ROUNDS; round++) {
    for (const [name, f] of Object.entries(kinds)) {
      const t = f();
      (times[name] ??= { wallS: [], cpuS: [] }).wallS.push(r3(t.wallS));
      times[name].cpuS.push(r3(t.cpuS));
    }
  }
  const loadAfter = loadavg();
  const med = Object.fromEntries(Object.entries(times).map(([k, v]) => [k, { wallS: median(v.wallS), cpuS: median(v.cpuS) }]));
  return {
    cohort: '4 × (19 ch × 256 Hz × 1 h), simulated EDF+C with scoring files',
    command: 'node dist/cli/bandwise.js ingest <cohort> --out <db> --jobs 1 --quiet (defaults: fits on)',
    baseline: 'python3 tests/bench/numpy_cohort.py <edf…> (memmap decode + scipy.signal.welch per 30-s epoch, one process)',
    rounds: ROUNDS,
    loadAverage: { before: loadBefore.map(r3), after: loadAfter.map(r3) },
    medians: med,
    ratio4Recordings: { wall: r3(med.numpyScipy4.wallS / med.bandwise4.wallS), cpu: r3(med.numpyScipy4.cpuS / med.bandwise4.cpuS) },
    ratio1Recording: { wall: r3(med.numpyScipy1.wallS / med.bandwise1.wallS), cpu: r3(med.numpyScipy1.cpuS / med.bandwise1.cpuS) },
    targetRatio: 2,
    runs: times,
  };
}
