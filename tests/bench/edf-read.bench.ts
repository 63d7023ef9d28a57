// Benchmark: EDF decode throughput. Writes (with our EdfWriter, into the OS temp folder) a
// 19-channel, 256 Hz, 2-hour EDF+C once, then reads all channels in 30-s epochs to Float32 and
// reports channel-samples per second, wall seconds, file size and peak resident memory.
// Run alone: npx tsx -e "import('./tests/bench/edf-read.bench.ts').then(m=>m.run()).then(r=>console.log(JSON.stringify(r)))"
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openEdf } from '../../ingest/edf/reader.ts';
import { EdfWriter } from '../../src/simulation/edf-writer.ts';

const CHANNELS = 19;
const FS_HZ = 256;
const HOURS = 2;
const RECORD_S = 1;
const EPOCH_S = 30;
const NAMES = ['Fp1', 'Fp2', 'F7', 'F3', 'Fz', 'F4', 'F8', 'T7', 'C3', 'Cz', 'C4', 'T8', 'P7', 'P3', 'Pz', 'P4', 'P8', 'O1', 'O2'];

async function writeBenchFile(path: string): Promise<void> {
  const totalRecords = (HOURS * 3600) / RECORD_S;
  const w = await EdfWriter.open(path, {
    variant: 'EDF+C',
    startDate: '2020-01-01T22:00:00',
    recordDurationS: RECORD_S,
    signals: NAMES.map((n) => ({ label: `EEG ${n}-M2`, physicalDimension: 'uV', physicalMin: -500, physicalMax: 500, samplesPerRecord: FS_HZ * RECORD_S })),
    annotations: Array.from({ length: (HOURS * 3600) / EPOCH_S }, (_, e) => ({ onsetS: e * EPOCH_S, durationS: EPOCH_S, text: 'Sleep stage N2' })),
  });
  const block = 60; // records per write
  const bufs = NAMES.map(() => new Float32Array(block * FS_HZ * RECORD_S));
  let seed = 12345;
  for (let r0 = 0; r0 < totalRecords; r0 += block) {
    for (let c = 0; c < CHANNELS; c++) {
      const b = bufs[c];
      for (let i = 0; i < b.length; i++) {
        const t = (r0 * FS_HZ + i) / FS_HZ;
        seed = (seed * 1103515245 + 12345) >>> 0; // LCG noise (Numerical Recipes constants)
        b[i] = 40 * Math.sin(2 * Math.PI * (2 + c * 0.5) * t) + ((seed >>> 8) / 2 ** 24 - 0.5) * 30;
      }
    }
    await w.writeRecords(bufs);
  }
  await w.close();
}

export async function run(): Promise<Record<string, unknown>> {
  const dir = mkdtempSync(join(tmpdir(), 'bandwise-bench-edf-'));
  const path = join(dir, 'bench.edf');
  try {
    const g0 = performance.now();
    await writeBenchFile(path);
    const writeSeconds = (performance.now() - g0) / 1000;
    const fileBytes = statSync(path).size;
    const rssBeforeReadMB = process.resourceUsage().maxRSS / 1024;

    const t0 = performance.now();
    const f = await openEdf(path);
    const openSeconds = (performance.now() - t0) / 1000; // header + annotation pass
    const signals = f.header.signals.filter((s) => !s.isAnnotation).map((s) => s.index);
    let samples = 0;
    let checksum = 0;
    let epochs = 0;
    for await (const b of f.readEpochs({ signals, epochS: EPOCH_S })) {
      if (!b.data) continue;
      epochs++;
      for (const d of b.data) {
        samples += d.length;
        checksum += d[0] + d[d.length - 1];
      }
    }
    await f.close();
    const seconds = (performance.now() - t0) / 1000;
    return {
      name: 'edf-read',
      channels: CHANNELS,
      fsHz: FS_HZ,
      hours: HOURS,
      epochS: EPOCH_S,
      epochs,
      annotations: f.annotations.length,
      channelSamples: samples,
      channelSamplesPerSecond: Math.round(samples / seconds),
      seconds: Number(seconds.toFixed(3)),
      openSeconds: Number(openSeconds.toFixed(3)),
      fileBytes,
      writeSeconds: Number(writeSeconds.toFixed(3)),
      peakRssMB: Number((process.resourceUsage().maxRSS / 1024).toFixed(1)),
      rssBeforeReadMB: Number(rssBeforeReadMB.toFixed(1)),
      checksum: Number(checksum.toFixed(3)),
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
