// Recordings shaped like clinical exports, written by Debian's libedf (EDFlib 1.23; record
// duration set with edf_set_datarecord_duration in units of 10 µs, edflib.h) as EDF+ and as BDF+:
// 0.5-s and 30-s data records, signals from 1 to 512 Hz in one file, a signal in mV; then the
// same bytes with the last record cut short and with the record count set to −1 (EDF 1992 §2.1:
// −1 = unknown). Every check compares the values read with those EDFlib was given (within one
// digital step), and the warnings with what was done to the file.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf, type EdfFile } from '../../ingest/edf/reader.ts';
import { compileWithLibedf, writerSource, type RefAnnotation, type RefSignal, type WriterOptions } from './libedf.ts';
import { makeTmpDir } from './helpers.ts';

type FileType = NonNullable<WriterOptions['fileType']>;
const TYPES: [string, FileType, number][] = [
  ['EDF+', 'EDFLIB_FILETYPE_EDFPLUS', 32767],
  ['BDF+', 'EDFLIB_FILETYPE_BDFPLUS', 8388607],
];

/** Signals with symmetric digital limits ±dmax (16 or 24 bits). */
const halfSecondSignals = (dmax: number): RefSignal[] => [
  {
    label: 'EEG C4-M1',
    dim: 'uV',
    pmin: -500,
    pmax: 500,
    dmin: -dmax,
    dmax,
    fs: 256,
    expr: '80.0*sin(2*M_PI*10.0*t) + 20.0*sin(2*M_PI*1.3*t) + 0.5*(double)(i % 9)',
  },
  // a chin EMG recorded in millivolts
  { label: 'EMG chin', dim: 'mV', pmin: -0.5, pmax: 0.5, dmin: -dmax, dmax, fs: 512, expr: '0.2*sin(2*M_PI*40.0*t) + 0.001*(double)((i*13) % 17)' },
];
const HALF_SECOND_ANNOTATIONS: RefAnnotation[] = [
  { onset100us: 0, duration100us: 300000, text: 'Sleep stage W' },
  { onset100us: 300000, duration100us: 300000, text: 'Sleep stage N2' },
  { onset100us: 123400, duration100us: 15000, text: 'Arousal' },
];
const HALF_SECOND_S = 60;

/** 1 to 512 Hz in one file of 30-s records (EDFlib allows up to 60-s records). */
const mixedSignals = (dmax: number): RefSignal[] => [
  { label: 'SpO2', dim: '%', pmin: 0, pmax: 100, dmin: -dmax, dmax, fs: 1, expr: '95.0 + 3.0*sin(2*M_PI*0.01*t)' },
  { label: 'Pleth', dim: '', pmin: -1, pmax: 1, dmin: -dmax, dmax, fs: 2, expr: '0.8*sin(2*M_PI*0.3*t)' },
  { label: 'Resp thorax', dim: 'uV', pmin: -1000, pmax: 1000, dmin: -dmax, dmax, fs: 10, expr: '600.0*sin(2*M_PI*0.25*t)' },
  { label: 'EMG leg', dim: 'uV', pmin: -200, pmax: 200, dmin: -dmax, dmax, fs: 64, expr: '50.0*sin(2*M_PI*12.0*t) + (double)(i % 7)' },
  { label: 'ECG', dim: 'mV', pmin: -5, pmax: 5, dmin: -dmax, dmax, fs: 200, expr: '1.5*sin(2*M_PI*1.1*t)' },
  { label: 'EEG F4-M1', dim: 'uV', pmin: -500, pmax: 500, dmin: -dmax, dmax, fs: 256, expr: '60.0*sin(2*M_PI*13.5*t) + 0.25*(double)(i % 11)' },
  { label: 'EEG O2-M1', dim: 'uV', pmin: -500, pmax: 500, dmin: -dmax, dmax, fs: 512, expr: '40.0*sin(2*M_PI*9.5*t) - 0.25*(double)(i % 5)' },
];
const MIXED_ANNOTATIONS: RefAnnotation[] = [
  { onset100us: 0, duration100us: 300000, text: 'Sleep stage W' },
  { onset100us: 450000, duration100us: -1, text: 'Lights off' },
];
const MIXED_S = 90;

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('libedf-fixtures');
});
afterAll(() => tmp?.cleanup());

interface Written {
  path: string;
  /** The exact values EDFlib was given, per signal. */
  planted: Float64Array[];
}

function writeWithLibedf(name: string, signals: RefSignal[], annotations: RefAnnotation[], seconds: number, options: WriterOptions): Written {
  const exe = compileWithLibedf(tmp.dir, `${name}-writer`, writerSource(signals, annotations, seconds, 'X', options));
  const path = join(tmp.dir, `${name}.${options.fileType === 'EDFLIB_FILETYPE_BDFPLUS' ? 'bdf' : 'edf'}`);
  execFileSync(exe, [path, `${path}.raw`]);
  const raw = readFileSync(`${path}.raw`);
  const all = new Float64Array(raw.buffer, raw.byteOffset, raw.byteLength / 8);
  const planted: Float64Array[] = [];
  let o = 0;
  for (const s of signals) {
    planted.push(all.slice(o, o + s.fs * seconds));
    o += s.fs * seconds;
  }
  return { path, planted };
}

/** Every complete epoch of the requested signals, concatenated; and the drop reasons seen. */
async function readAll(f: EdfFile, signals: number[], epochS: number): Promise<{ data: number[][]; drops: string[] }> {
  const data: number[][] = signals.map(() => []);
  const drops: string[] = [];
  for await (const b of f.readEpochs({ signals, epochS })) {
    if (b.data) b.data.forEach((d, k) => data[k].push(...d));
    else drops.push(`${b.epoch}:${b.dropReason}`);
  }
  return { data, drops };
}

/** Largest |read − planted| over the first `n` samples, in digital steps of signal s (float32 rounding allowed for). */
function stepsOff(read: number[], planted: Float64Array, s: RefSignal, n: number): number {
  expect(read.length).toBe(n);
  const step = (s.pmax - s.pmin) / (s.dmax - s.dmin);
  let worst = 0;
  for (let i = 0; i < n; i++) worst = Math.max(worst, Math.abs(read[i] - planted[i]) - 6e-8 * Math.abs(planted[i]));
  return worst / step;
}

/** The file's bytes with the 8-character "number of data records" field (byte 236, EDF 1992 §2.1) replaced. */
function withRecordCount(bytes: Buffer, count: string): Buffer {
  const out = Buffer.from(bytes);
  out.write(count.padEnd(8, ' '), 236, 'latin1');
  return out;
}

describe.each(TYPES)('%s written by libedf', (kind, fileType, dmax) => {
  const bytesPerSample = kind === 'BDF+' ? 3 : 2;
  let half: Written;
  let mixed: Written;
  beforeAll(() => {
    half = writeWithLibedf(`half-${bytesPerSample}`, halfSecondSignals(dmax), HALF_SECOND_ANNOTATIONS, HALF_SECOND_S, { fileType, recordS: 0.5 });
    mixed = writeWithLibedf(`mixed-${bytesPerSample}`, mixedSignals(dmax), MIXED_ANNOTATIONS, MIXED_S, { fileType, recordS: 30 });
  });

  it('0.5-s records, a signal in mV: layout, onsets, samples within one step, annotations', async () => {
    const f = await openEdf(half.path);
    try {
      expect([f.header.variant, f.header.bytesPerSample, f.header.nRecords, f.header.recordDurationS]).toEqual([
        `${kind.slice(0, 3)}+C`,
        bytesPerSample,
        120,
        0.5,
      ]);
      const ordinary = f.header.signals.filter((s) => !s.isAnnotation);
      expect(ordinary.map((s) => [s.label, s.physicalDimension, s.samplesPerRecord, s.fsHz])).toEqual([
        ['EEG C4-M1', 'uV', 128, 256],
        ['EMG chin', 'mV', 256, 512],
      ]);
      expect(f.recordOnsetsS[1]).toBe(0.5);
      expect(f.recordOnsetsS[119]).toBe(59.5);
      expect(f.warnings).toEqual([]);
      const { data, drops } = await readAll(f, [0, 1], 30);
      expect(drops).toEqual([]);
      halfSecondSignals(dmax).forEach((s, k) => expect(stepsOff(data[k], half.planted[k], s, s.fs * HALF_SECOND_S)).toBeLessThanOrEqual(1));
      // the mV values come back in mV (the file's unit): 0.2-mV peaks, not 200
      expect(Math.max(...data[1])).toBeGreaterThan(0.19);
      expect(Math.max(...data[1])).toBeLessThan(0.22);
      const want = HALF_SECOND_ANNOTATIONS.map((a) => ({
        onsetS: a.onset100us / 1e4,
        durationS: a.duration100us < 0 ? null : a.duration100us / 1e4,
        texts: [a.text],
      }));
      expect([...f.annotations].sort((a, b) => a.onsetS - b.onsetS)).toEqual(want.sort((a, b) => a.onsetS - b.onsetS));
    } finally {
      await f.close();
    }
  });

  it('30-s records with signals at 1, 2, 10, 64, 200, 256 and 512 Hz: every sample within one step, in 30-s and 10-s epochs', async () => {
    const f = await openEdf(mixed.path);
    try {
      expect([f.header.nRecords, f.header.recordDurationS]).toEqual([3, 30]);
      const ordinary = f.header.signals.filter((s) => !s.isAnnotation);
      expect(ordinary.map((s) => s.fsHz)).toEqual([1, 2, 10, 64, 200, 256, 512]);
      expect(ordinary.map((s) => s.samplesPerRecord)).toEqual([30, 60, 300, 1920, 6000, 7680, 15360]);
      expect(ordinary.map((s) => s.physicalDimension)).toEqual(['%', '', 'uV', 'uV', 'mV', 'uV', 'uV']);
      const signals = ordinary.map((s) => s.index);
      for (const epochS of [30, 10]) {
        const { data, drops } = await readAll(f, signals, epochS);
        expect(drops).toEqual([]);
        mixedSignals(dmax).forEach((s, k) =>
          expect(stepsOff(data[k], mixed.planted[k], s, s.fs * MIXED_S), `${s.label}, ${epochS}-s epochs`).toBeLessThanOrEqual(1),
        );
      }
      expect(f.annotations.map((a) => [a.onsetS, a.texts[0]])).toEqual([
        [0, 'Sleep stage W'],
        [45, 'Lights off'],
      ]);
    } finally {
      await f.close();
    }
  });

  it('the last record cut short: ignored with a warning, every complete record read as planted', async () => {
    const bytes = readFileSync(half.path);
    const recordBytes = (128 + 256) * bytesPerSample + (bytes.length - 256 * 4 - 120 * (128 + 256) * bytesPerSample) / 120;
    const cut = join(tmp.dir, `cut-${bytesPerSample}`);
    writeFileSync(cut, bytes.subarray(0, bytes.length - 100));
    const f = await openEdf(cut);
    try {
      expect(f.header.nRecords).toBe(119);
      expect(f.warnings).toEqual([
        { field: 'file', message: `the last data record is incomplete (${recordBytes - 100} of ${recordBytes} bytes) and is ignored` },
      ]);
      // 59.5 s: one whole 30-s epoch, then the partial one is dropped as 'end'
      const { data, drops } = await readAll(f, [0, 1], 30);
      expect(drops).toEqual(['1:end']);
      halfSecondSignals(dmax).forEach((s, k) => expect(stepsOff(data[k], half.planted[k], s, s.fs * 30)).toBeLessThanOrEqual(1));
      const tenths = await readAll(f, [1], 0.5);
      expect(tenths.data[0].length).toBe(512 * 59.5);
      expect(stepsOff(tenths.data[0], half.planted[1], halfSecondSignals(dmax)[1], 512 * 59.5)).toBeLessThanOrEqual(1);
    } finally {
      await f.close();
    }
  });

  it('record count −1: derived from the file size with a warning, the samples as planted', async () => {
    const path = join(tmp.dir, `unknown-${bytesPerSample}`);
    writeFileSync(path, withRecordCount(readFileSync(mixed.path), '-1'));
    const f = await openEdf(path);
    try {
      expect(f.header.nRecords).toBe(3);
      expect(f.warnings).toEqual([
        { field: 'number of data records', message: 'number of data records is -1 (unknown); 3 records derived from the file size' },
      ]);
      const signals = f.header.signals.filter((s) => !s.isAnnotation).map((s) => s.index);
      const { data } = await readAll(f, signals, 30);
      mixedSignals(dmax).forEach((s, k) => expect(stepsOff(data[k], mixed.planted[k], s, s.fs * MIXED_S)).toBeLessThanOrEqual(1));
    } finally {
      await f.close();
    }
  });
});
