// Round trips against Debian's libedf (EDFlib 1.23), an independent EDF/EDF+ implementation:
// files libedf writes must read back through our reader, and files our writer makes must read
// back through libedf, sample for sample within one digital step and annotation for annotation.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf, type EdfFile } from '../../ingest/edf/reader.ts';
import { EdfWriter, type EdfWriteSpec } from '../../src/simulation/edf-writer.ts';
import { compileWithLibedf, parseReaderOutput, READER_SOURCE, writerSource, type RefAnnotation, type RefSignal } from './libedf.ts';
import { makeTmpDir } from './helpers.ts';

const SECONDS = 20;
// Mixed sampling rates (256, 128, 200 Hz), asymmetric physical and reduced digital ranges.
const REF_SIGNALS: RefSignal[] = [
  { label: 'EEG C3-M2', dim: 'uV', pmin: -500, pmax: 500, dmin: -32768, dmax: 32767, fs: 256, expr: '150.0*sin(2*M_PI*7.0*t) + (double)(i % 13)' },
  { label: 'EOG LOC-M2', dim: 'uV', pmin: -300, pmax: 500, dmin: -2048, dmax: 2047, fs: 128, expr: '200.0*cos(2*M_PI*0.7*t) - 50.0 + (double)((i*7) % 5)' },
  { label: 'EMG chin', dim: 'uV', pmin: -100, pmax: 100, dmin: -1000, dmax: 1000, fs: 200, expr: '(double)((i*37) % 181) - 90.0' },
];
const REF_ANNOTATIONS: RefAnnotation[] = [
  { onset100us: 0, duration100us: -1, text: 'Recording starts' },
  { onset100us: 15000, duration100us: 10000, text: 'Lights off' },
  { onset100us: 123456, duration100us: -1, text: 'Ünïcødé ✓ 睡眠 stage N2' },
  { onset100us: 50000, duration100us: 300000, text: 'Sleep stage N2' },
];
const FAKE_NAME = 'Fictional_Testperson';

let tmp: ReturnType<typeof makeTmpDir>;
let readerExe: string;
let libedfFile: string;
let rawValues: Float64Array[];

function readRaw(path: string, lengths: number[]): Float64Array[] {
  const buf = readFileSync(path);
  const all = new Float64Array(buf.buffer, buf.byteOffset, buf.byteLength / 8);
  const out: Float64Array[] = [];
  let o = 0;
  for (const n of lengths) {
    out.push(all.slice(o, o + n));
    o += n;
  }
  expect(o).toBe(all.length);
  return out;
}

async function readAll(f: EdfFile, signals: number[], epochS: number, chunkBytes?: number): Promise<Float32Array[]> {
  const parts: Float32Array[][] = signals.map(() => []);
  for await (const b of f.readEpochs({ signals, epochS, chunkBytes })) {
    if (b.data) b.data.forEach((d, k) => parts[k].push(d.slice()));
  }
  return parts.map((p) => {
    const out = new Float32Array(p.reduce((a, x) => a + x.length, 0));
    let o = 0;
    for (const x of p) {
      out.set(x, o);
      o += x.length;
    }
    return out;
  });
}

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

beforeAll(() => {
  tmp = makeTmpDir('libedf');
  // If gcc or libedf is missing these throw and every test below fails (no skip).
  const writerExe = compileWithLibedf(tmp.dir, 'ref_writer', writerSource(REF_SIGNALS, REF_ANNOTATIONS, SECONDS, FAKE_NAME));
  readerExe = compileWithLibedf(tmp.dir, 'ref_reader', READER_SOURCE);
  libedfFile = join(tmp.dir, 'libedf.edf');
  execFileSync(writerExe, [libedfFile, join(tmp.dir, 'libedf.raw')]);
  rawValues = readRaw(
    join(tmp.dir, 'libedf.raw'),
    REF_SIGNALS.map((s) => s.fs * SECONDS),
  );
});
afterAll(() => tmp?.cleanup());

describe('files written by libedf (EDFlib 1.23) read back through our reader', () => {
  it('EDF+ header: variant, start, record layout and per-signal fields as libedf wrote them', async () => {
    const f = await openEdf(libedfFile);
    try {
      expect(f.header.variant).toBe('EDF+C');
      expect(f.header.startDate).toBe('2003-04-05T22:30:15');
      expect(f.header.nRecords).toBe(SECONDS);
      expect(f.header.recordDurationS).toBe(1);
      const ordinary = f.header.signals.filter((s) => !s.isAnnotation);
      expect(ordinary.map((s) => s.label)).toEqual(REF_SIGNALS.map((s) => s.label));
      expect(ordinary.map((s) => s.fsHz)).toEqual([256, 128, 200]);
      expect(ordinary.map((s) => [s.physicalMin, s.physicalMax, s.digitalMin, s.digitalMax])).toEqual(REF_SIGNALS.map((s) => [s.pmin, s.pmax, s.dmin, s.dmax]));
      expect(f.header.signals.filter((s) => s.isAnnotation)).toHaveLength(1);
      expect(Array.from(f.recordOnsetsS)).toEqual(Array.from({ length: SECONDS }, (_, k) => k));
      expect(f.gaps).toEqual([]);
      expect(f.durationS).toBe(SECONDS);
    } finally {
      await f.close();
    }
  });

  it('samples at 256, 128 and 200 Hz equal the values libedf was given, within one digital step', async () => {
    const f = await openEdf(libedfFile);
    try {
      const got = await readAll(f, [0, 1, 2], 5);
      REF_SIGNALS.forEach((s, k) => {
        const step = (s.pmax - s.pmin) / (s.dmax - s.dmin);
        expect(got[k].length).toBe(s.fs * SECONDS);
        expect(maxAbsDiff(got[k], rawValues[k])).toBeLessThanOrEqual(step);
      });
      // Chunk size must not change a single sample: one record per read and an odd 3000-byte chunk.
      for (const chunkBytes of [1, 3000]) {
        const again = await readAll(f, [2, 0], 2, chunkBytes);
        expect(Array.from(again[0])).toEqual(Array.from(got[2]));
        expect(Array.from(again[1])).toEqual(Array.from(got[0]));
      }
    } finally {
      await f.close();
    }
  });

  it('annotations (onset, duration, UTF-8 text) equal those given to edfwrite_annotation_utf8', async () => {
    const f = await openEdf(libedfFile);
    try {
      const want = REF_ANNOTATIONS.map((a) => ({ onsetS: a.onset100us / 1e4, durationS: a.duration100us < 0 ? null : a.duration100us / 1e4, texts: [a.text] }));
      const byOnset = (x: { onsetS: number }, y: { onsetS: number }) => x.onsetS - y.onsetS;
      expect([...f.annotations].sort(byOnset)).toEqual([...want].sort(byOnset));
    } finally {
      await f.close();
    }
  });

  it('the same file with its EDF+C mark blanked reads as plain EDF with the same samples', async () => {
    const bytes = readFileSync(libedfFile);
    bytes.fill(0x20, 192, 197); // reserved field starts at byte 192 (EDF 1992 §2.1: 8+80+80+8+8+8)
    const plain = join(tmp.dir, 'plain.edf');
    writeFileSync(plain, bytes);
    const f = await openEdf(plain);
    try {
      expect(f.header.variant).toBe('EDF');
      expect(f.header.warnings).toContainEqual({
        field: 'label',
        message: 'signal 4: labelled "EDF Annotations" in a plain EDF file; read as an annotation signal',
      });
      const got = await readAll(f, [1], 10);
      expect(maxAbsDiff(got[0], rawValues[1])).toBeLessThanOrEqual(800 / 4095);
    } finally {
      await f.close();
    }
  });
});

describe('files written by our EdfWriter read back through libedf', () => {
  const fsList = [256, 128, 200];
  const seconds = 12;
  function signalValues(k: number): Float32Array {
    const n = fsList[k] * seconds;
    const out = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      const t = i / fsList[k];
      // Sine + deterministic pattern; signal 2 also exceeds its ±100 range to exercise clipping.
      out[i] = k === 0 ? 120 * Math.sin(2 * Math.PI * 11 * t) + (i % 7) : k === 1 ? -40 + 3 * ((i * 13) % 17) : 130 * Math.sin(2 * Math.PI * 0.5 * t);
    }
    return out;
  }
  const spec: EdfWriteSpec = {
    variant: 'EDF+C',
    startDate: '2019-11-30T21:45:00',
    recordDurationS: 1,
    signals: [
      { label: 'EEG F4-M1', physicalDimension: 'uV', physicalMin: -400, physicalMax: 400, samplesPerRecord: 256, prefilter: 'HP:0.3Hz' },
      { label: 'EOG ROC-M1', physicalDimension: 'uV', physicalMin: -250, physicalMax: 350.5, digitalMin: -2048, digitalMax: 2047, samplesPerRecord: 128 },
      { label: 'EMG chin', physicalDimension: 'uV', physicalMin: -100, physicalMax: 100, samplesPerRecord: 200 },
    ],
    annotations: [
      { onsetS: 0, durationS: 30, text: 'Sleep stage W' },
      { onsetS: 2.5, durationS: null, text: 'Bewegung – Ärger ✓' },
      { onsetS: 2.75, durationS: 0.5, text: 'Arousal' },
      { onsetS: 11.9, durationS: 1, text: 'Lights on' },
    ],
  };

  function clipExpected(k: number, v: number): number {
    const s = spec.signals[k];
    return Math.min(s.physicalMax, Math.max(s.physicalMin, v));
  }

  it('libedf reads the header, every sample (within one step, clipped at the limits) and the annotations', async () => {
    const path = join(tmp.dir, 'ours.edf');
    const data = [0, 1, 2].map(signalValues);
    const w = await EdfWriter.open(path, spec);
    // Streamed in uneven pieces: 5 records, then 7.
    await w.writeRecords(data.map((d, k) => d.subarray(0, 5 * fsList[k])));
    await w.writeRecords(data.map((d, k) => d.subarray(5 * fsList[k])));
    await w.close();

    const out = execFileSync(readerExe, [path, join(tmp.dir, 'ours.raw')], { encoding: 'utf8' });
    const ref = parseReaderOutput(out);
    expect(ref.filetype).toBe(1); // EDFLIB_FILETYPE_EDFPLUS
    expect(ref.records).toBe(seconds);
    expect(ref.recordDuration100ns).toBe(10_000_000);
    expect(ref.start).toBe('2019-11-30T21:45:00');
    expect(ref.signals.map((s) => [s.label, s.spr, s.samples, s.pmin, s.pmax, s.dmin, s.dmax, s.dim])).toEqual([
      ['EEG F4-M1', 256, 256 * seconds, -400, 400, -32768, 32767, 'uV'],
      ['EOG ROC-M1', 128, 128 * seconds, -250, 350.5, -2048, 2047, 'uV'],
      ['EMG chin', 200, 200 * seconds, -100, 100, -32768, 32767, 'uV'],
    ]);
    const samples = readRaw(
      join(tmp.dir, 'ours.raw'),
      fsList.map((f) => f * seconds),
    );
    let clipped = 0;
    spec.signals.forEach((s, k) => {
      const step = (s.physicalMax - s.physicalMin) / ((s.digitalMax ?? 32767) - (s.digitalMin ?? -32768));
      const want = Array.from(data[k], (v) => clipExpected(k, v));
      clipped += Array.from(data[k]).filter((v) => v > s.physicalMax || v < s.physicalMin).length;
      expect(maxAbsDiff(samples[k], want)).toBeLessThanOrEqual(step);
    });
    expect(clipped).toBeGreaterThan(100); // the clipping branch was really exercised

    const got = ref.annotations.map((a) => ({ onsetS: a.onset100ns / 1e7, durationS: a.duration100ns < 0 ? null : a.duration100ns / 1e7, text: a.text }));
    expect(got.sort((a, b) => a.onsetS - b.onsetS)).toEqual(spec.annotations);

    // And our reader agrees with libedf on the same file, sample for sample (float32 rounding only).
    const f = await openEdf(path);
    try {
      const mine = await readAll(f, [0, 1, 2], 4);
      for (let k = 0; k < 3; k++) expect(maxAbsDiff(mine[k], samples[k])).toBeLessThan(1e-4);
      // Clipping counts: our per-epoch count of samples at the digital limits equals the samples
      // libedf returns at the physical limits (within half a step), signal by signal.
      const counted = [0, 0, 0];
      for await (const b of f.readEpochs({ signals: [0, 1, 2], epochS: 4 })) b.atDigitalLimits!.forEach((n, k) => (counted[k] += n));
      const atLimits = spec.signals.map((s, k) => {
        const half = (0.5 * (s.physicalMax - s.physicalMin)) / ((s.digitalMax ?? 32767) - (s.digitalMin ?? -32768));
        return Array.from(samples[k]).filter((v) => Math.abs(v - s.physicalMin) < half || Math.abs(v - s.physicalMax) < half).length;
      });
      expect(atLimits[2]).toBeGreaterThan(100);
      expect(counted).toEqual(atLimits);
    } finally {
      await f.close();
    }
  });

  it('a plain EDF from our writer (0.5-s records) is read by libedf as EDF', async () => {
    const path = join(tmp.dir, 'ours-plain.edf');
    const w = await EdfWriter.open(path, {
      variant: 'EDF',
      startDate: '1999-12-31T23:59:58',
      recordDurationS: 0.5,
      signals: [{ label: 'Cz', physicalDimension: 'uV', physicalMin: -1000, physicalMax: 1000, samplesPerRecord: 64 }],
    });
    const x = new Float32Array(64 * 6);
    for (let i = 0; i < x.length; i++) x[i] = 500 * Math.sin(i / 5);
    await w.writeRecords([x]);
    await w.close();
    const ref = parseReaderOutput(execFileSync(readerExe, [path, join(tmp.dir, 'plain.raw')], { encoding: 'utf8' }));
    expect(ref.filetype).toBe(0); // EDFLIB_FILETYPE_EDF
    expect(ref.records).toBe(6);
    expect(ref.recordDuration100ns).toBe(5_000_000);
    expect(ref.start).toBe('1999-12-31T23:59:58');
    const [samples] = readRaw(join(tmp.dir, 'plain.raw'), [x.length]);
    expect(maxAbsDiff(samples, x)).toBeLessThanOrEqual(2000 / 65535);
  });
});
