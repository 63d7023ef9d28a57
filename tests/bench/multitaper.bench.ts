/**
 * The multitaper estimate's cost per recording beside Welch's (issue 17): one generated 19-channel
 * 256-Hz EDF+C (writeBenchEdf, ingest.bench.ts) through the ingest pipeline (processRecording:
 * read, reject, spectra, stage averages, fits, quality; no store write), with the default
 * parameters (Welch only) and with `--estimator welch,multitaper` (NW 2, K 3: three tapered
 * transforms per segment beside Welch's one), each with and without the aperiodic fits. Every run
 * is its own Node process, so its peak resident memory is its own. Rounds alternate the kinds,
 * so load changes hit all alike; medians of wall and CPU times (CPU times are the steadier on a
 * shared machine), each kind's highest peak RSS (childPeakRssMB; the top-level peakRssMB is the
 * runner's own), and the 1-min load average.
 * `npm run bench -- multitaper`; BANDWISE_BENCH_HOURS sets the recording length (default 8 h),
 * BANDWISE_BENCH_ROUNDS the rounds (default 3).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import type { IngestParams } from '../../ingest/pipeline/params.ts';
import { writeBenchEdf } from './ingest.bench.ts';

const here = path.dirname(fileURLToPath(import.meta.url));
const repo = path.resolve(here, '../..');
const CHANNELS = 19;
const FS_HZ = 256;
const MULTITAPER = { nw: 2, k: 3 };

const KINDS: Record<string, Partial<IngestParams>> = {
  welch: {},
  welchMultitaper: { multitaper: MULTITAPER },
  welchNoFits: { fit: null },
  welchMultitaperNoFits: { multitaper: MULTITAPER, fit: null },
};

interface ChildResult {
  wallS: number;
  cpuS: number;
  peakRssMB: number;
  spectraRows: number;
}

function child(file: string, kind: string): ChildResult {
  const r = spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), fileURLToPath(import.meta.url), '--multitaper-child', file, kind], {
    encoding: 'utf8',
    maxBuffer: 1 << 24,
  });
  if (r.status !== 0) throw new Error(`${kind} child failed: ${r.stderr.slice(-2000)}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as ChildResult;
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[xs.length >> 1];
const r3 = (x: number) => Number(x.toFixed(3));

export async function run(): Promise<Record<string, unknown>> {
  const hours = Number(process.env.BANDWISE_BENCH_HOURS ?? 8);
  const rounds = Number(process.env.BANDWISE_BENCH_ROUNDS ?? 3);
  if (!(hours > 0 && hours * 120 === Math.round(hours * 120)))
    throw new Error(`BANDWISE_BENCH_HOURS must be a positive number of 30-s epochs in hours, got ${hours}`);
  if (!(Number.isInteger(rounds) && rounds >= 1)) throw new Error(`BANDWISE_BENCH_ROUNDS must be a positive integer, got ${rounds}`);
  const dir = mkdtempSync(path.join(tmpdir(), 'bw-bench-multitaper-'));
  try {
    const file = path.join(dir, 'night.edf');
    await writeBenchEdf(file, CHANNELS, FS_HZ, hours, 17);
    child(file, 'welch'); // warm-up: the file cache and tsx's compile cache
    const runs: Record<string, ChildResult[]> = {};
    const loadBefore = loadavg();
    for (let round = 0; round < rounds; round++) for (const kind of Object.keys(KINDS)) (runs[kind] ??= []).push(child(file, kind));
    const loadAfter = loadavg();
    const med = Object.fromEntries(
      Object.entries(runs).map(([k, v]) => [
        k,
        {
          wallS: r3(median(v.map((x) => x.wallS))),
          cpuS: r3(median(v.map((x) => x.cpuS))),
          peakRssMB: r3(Math.max(...v.map((x) => x.peakRssMB))),
          spectraRows: v[0].spectraRows,
        },
      ]),
    );
    const ratio = (a: string, b: string) => ({ wall: r3(med[a].wallS / med[b].wallS), cpu: r3(med[a].cpuS / med[b].cpuS) });
    return {
      recording: `${CHANNELS} ch × ${FS_HZ} Hz × ${hours} h, generated EDF+C (AR(1) noise, stage annotations)`,
      pipeline: 'processRecording with default parameters (references: recorded), no store write; one Node process per run',
      multitaper: { ...MULTITAPER, note: 'K tapered transforms per Welch segment, on the same segments and grid' },
      rounds,
      loadAverage: { before: loadBefore.map(r3), after: loadAfter.map(r3) },
      medians: med,
      ratioWithFits: ratio('welchMultitaper', 'welch'),
      ratioSpectraOnly: ratio('welchMultitaperNoFits', 'welchNoFits'),
      extraCpuSPerRecordingHour: {
        withFits: r3((med.welchMultitaper.cpuS - med.welch.cpuS) / hours),
        spectraOnly: r3((med.welchMultitaperNoFits.cpuS - med.welchNoFits.cpuS) / hours),
      },
      childPeakRssMB: { welch: med.welch.peakRssMB, welchMultitaper: med.welchMultitaper.peakRssMB },
      runs,
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

// child mode: one recording through the pipeline with one kind's parameters; its times and peak RSS
if (process.argv[2] === '--multitaper-child') {
  const [file, kind] = process.argv.slice(3);
  const params = resolveIngestParams(KINDS[kind]);
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const bundle = await processRecording({ row: 1, subject: 'b1', session: null, group: null, recordingPath: file, scoringPath: null, covariates: {} }, params);
  const cpu = process.cpuUsage(c0);
  console.log(
    JSON.stringify({
      wallS: (performance.now() - t0) / 1000,
      cpuS: (cpu.user + cpu.system) / 1e6,
      peakRssMB: process.resourceUsage().maxRSS / 1024,
      spectraRows: bundle.spectra.length,
    }),
  );
}
