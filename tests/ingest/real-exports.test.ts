// A recording shaped like a clinical polysomnography export, written by Debian's libedf (EDFlib
// 1.23, an EDF+ writer independent of ours; tests/edf/libedf.ts) and ingested end to end:
// 0.2-s data records at 200 Hz (40 samples per record), EEG labels as exports spell them
// ("EEG C3-A2", "c4:m1", "eeg fpz-cz"), an EEG channel with inverted polarity (physical minimum
// above physical maximum, EDF 1992 §2.1 allows it) and one with digital limits narrower than
// 16 bits, and the non-EEG signals of a sleep recording (EOG, chin EMG, ECG in mV, SpO2 in %,
// pleth, position, respiration). Scoring: EDF+ annotations "Sleep stage W/1/2/3/4/R/?" and
// "Movement time" (the R&K spellings of EDF+ 2003 §2.2.4's example; S3 and S4 merged into N3 by
// the AASM rule, Iber et al. 2007). Spectra are checked against scipy.signal.welch of the values
// given to libedf, samples against those values within one digital step.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { PipelineError, processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import { compileWithLibedf, writerSource, type RefAnnotation, type RefSignal } from '../edf/libedf.ts';
import { makeTmpDir } from '../edf/helpers.ts';
import { maxRel, scipyStageMean } from '../helpers/scipy-stage-mean.ts';

const FS = 200;
const RECORD_S = 0.2;
// per 30-s epoch, as the scorer wrote it (EDF+ texts), and the AASM stage it stands for
const SCORED: [string, string][] = [
  ['Sleep stage W', 'W'],
  ['Sleep stage W', 'W'],
  ['Sleep stage 1', 'N1'],
  ['Sleep stage 2', 'N2'],
  ['Sleep stage 2', 'N2'],
  ['Sleep stage 2', 'N2'],
  ['Sleep stage 2', 'N2'],
  ['Sleep stage 3', 'N3'],
  ['Sleep stage 4', 'N3'],
  ['Sleep stage 4', 'N3'],
  ['Movement time', 'unscored'],
  ['Sleep stage R', 'R'],
  ['Sleep stage 2', 'N2'],
  ['Sleep stage 2', 'N2'],
  ['Sleep stage ?', 'unscored'],
];
const EPOCHS = SCORED.length;
const SECONDS = EPOCHS * 30;
const ANNOTATIONS: RefAnnotation[] = SCORED.map(([text], e) => ({ onset100us: e * 30 * 10_000, duration100us: 30 * 10_000, text }));

/** C expression: a pseudo-random value in [−a, a) (fractional part of a scaled sine, a common hash), plus a sine. */
const noise = (seed: number, a: number, sineHz: number, sineUv: number) => {
  const u = `(sin((double)i*12.9898 + ${seed}.0)*43758.5453)`;
  return `${2 * a}.0*(${u} - floor(${u})) - ${a}.0 + ${sineUv}.0*sin(2*M_PI*${sineHz}.0*t)`;
};

const SIGNALS: RefSignal[] = [
  { label: 'EEG C3-A2', dim: 'uV', pmin: -500, pmax: 500, dmin: -32768, dmax: 32767, fs: FS, expr: noise(1, 60, 11, 20) },
  // inverted polarity: physical maximum below physical minimum (negative gain)
  { label: 'c4:m1', dim: 'uV', pmin: 500, pmax: -500, dmin: -32768, dmax: 32767, fs: FS, expr: `40.0 + ${noise(2, 50, 13, 15)}` },
  // digital limits of a 12-bit converter inside the 16-bit field
  { label: 'eeg fpz-cz', dim: 'uV', pmin: -400, pmax: 400, dmin: -2048, dmax: 2047, fs: FS, expr: noise(3, 40, 9, 10) },
  { label: 'EOG E1-M2', dim: 'uV', pmin: -500, pmax: 500, dmin: -32768, dmax: 32767, fs: FS, expr: noise(4, 80, 1, 50) },
  { label: 'EMG Chin', dim: 'uV', pmin: -200, pmax: 200, dmin: -32768, dmax: 32767, fs: FS, expr: noise(5, 20, 40, 5) },
  { label: 'ECG', dim: 'mV', pmin: -5, pmax: 5, dmin: -32768, dmax: 32767, fs: FS, expr: '1.5*sin(2*M_PI*1.1*t)' },
  { label: 'SpO2', dim: '%', pmin: 0, pmax: 100, dmin: -32768, dmax: 32767, fs: 5, expr: '95.0 + 2.0*sin(2*M_PI*0.01*t)' },
  { label: 'Pleth', dim: '', pmin: -1, pmax: 1, dmin: -32768, dmax: 32767, fs: 25, expr: '0.8*sin(2*M_PI*1.2*t)' },
  { label: 'Position', dim: '', pmin: 0, pmax: 255, dmin: -32768, dmax: 32767, fs: 5, expr: '2.0' },
  { label: 'Resp', dim: '', pmin: -1000, pmax: 1000, dmin: -32768, dmax: 32767, fs: 25, expr: '600.0*sin(2*M_PI*0.25*t)' },
];

let tmp: ReturnType<typeof makeTmpDir>;
let file = '';
let planted: Float64Array[] = [];
type Bundle = Awaited<ReturnType<typeof processRecording>>;
let bundle: Bundle;

const rec = (subject: string, recordingPath: string): CohortRecording => ({
  row: 1,
  subject,
  session: null,
  group: null,
  recordingPath,
  scoringPath: null,
  covariates: {},
});

beforeAll(async () => {
  tmp = makeTmpDir('real-exports');
  // if gcc or libedf is missing this throws and every test fails (no skip)
  const exe = compileWithLibedf(tmp.dir, 'writer', writerSource(SIGNALS, ANNOTATIONS, SECONDS, 'X', { recordS: RECORD_S }));
  file = path.join(tmp.dir, 'psg.edf');
  execFileSync(exe, [file, `${file}.raw`]);
  const raw = readFileSync(`${file}.raw`);
  const all = new Float64Array(raw.buffer, raw.byteOffset, raw.byteLength / 8);
  let o = 0;
  planted = SIGNALS.map((s) => {
    const x = all.slice(o, o + s.fs * SECONDS);
    o += s.fs * SECONDS;
    return x;
  });
  bundle = await processRecording(rec('psg', file), resolveIngestParams({ fit: null }));
}, 120_000);
afterAll(() => tmp?.cleanup());

describe('a clinical-style EDF+ export (0.2-s records, 200 Hz) through ingest', () => {
  it('takes only the EEG by default, each named by its derivation (AASM C3-A2 → C3 against A2; a scalp pair by both electrodes)', () => {
    expect(bundle.channels.map((c) => [c.label, c.channel, c.type, c.referenceElectrode, c.fsHz])).toEqual([
      ['EEG C3-A2', 'C3', 'EEG', 'A2', 200],
      ['c4:m1', 'C4', 'EEG', 'M1', 200],
      ['eeg fpz-cz', 'Fpz-Cz', 'EEG', 'Cz', 200],
    ]);
  });

  it('the non-EEG signals are there with their own types when asked for', async () => {
    const all = await processRecording(
      rec('psg', file),
      resolveIngestParams({ fit: null, channelTypes: ['EEG', 'EOG', 'EMG', 'ECG', 'RESP', 'MISC'], references: ['recorded'] }),
    ).catch((e: Error) => e);
    // SpO2 (%) and position are not voltages: asking for every type names the first of them
    expect(all).toBeInstanceOf(Error);
    expect((all as Error).message).toMatch(/channel "SpO2" has unit "%", not a voltage/);
    const some = await processRecording(rec('psg', file), resolveIngestParams({ fit: null, channelTypes: ['EOG', 'EMG', 'ECG'], references: ['recorded'] }));
    expect(some.channels.map((c) => [c.label, c.type])).toEqual([
      ['EOG E1-M2', 'EOG'],
      ['EMG Chin', 'EMG'],
      ['ECG', 'ECG'],
    ]);
  });

  it('stores the stages the scorer wrote: S3 and S4 as N3, movement time and "?" as unscored', () => {
    expect(bundle.epochs.stage).toEqual(SCORED.map(([, s]) => s));
    const count = (s: string) => bundle.epochs.stage.filter((x) => x === s).length;
    expect([count('W'), count('N1'), count('N2'), count('N3'), count('R'), count('unscored')]).toEqual([2, 1, 6, 3, 1, 2]);
  });

  it('reads the inverted and the narrow-range channels as planted, within one digital step', async () => {
    const f = await openEdf(file);
    try {
      for (const k of [1, 2]) {
        const got: number[] = [];
        for await (const b of f.readEpochs({ signals: [k], epochS: 30 })) if (b.data) got.push(...b.data[0]);
        expect(got.length).toBe(FS * SECONDS);
        const step = Math.abs(SIGNALS[k].pmax - SIGNALS[k].pmin) / (SIGNALS[k].dmax - SIGNALS[k].dmin);
        let worst = 0;
        for (let i = 0; i < got.length; i++) worst = Math.max(worst, Math.abs(got[i] - planted[k][i]));
        expect(worst).toBeLessThanOrEqual(step * 1.0001);
      }
    } finally {
      await f.close();
    }
  });

  it('the N2 spectra of C3 (0.2-s records) and C4 (inverted) equal scipy.signal.welch of the planted signals', () => {
    const n2 = SCORED.map(([, s], e) => (s === 'N2' ? e : -1)).filter((e) => e >= 0);
    for (const [k, channel] of [
      [0, 'C3'],
      [1, 'C4'],
    ] as const) {
      const rejected = new Set(bundle.rejections.filter((r) => r.channel === channel && r.reference === 'recorded').map((r) => r.epoch));
      const epochs = n2.filter((e) => !rejected.has(e));
      expect(epochs.length).toBeGreaterThanOrEqual(5);
      const stored = bundle.spectra.find((s) => s.channel === channel && s.reference === 'recorded' && s.stage === 'N2' && s.averaging === 'mean')!;
      expect(stored.nEpochs).toBe(epochs.length);
      // 16-bit storage: a digital step of 1000/65535 µV against an RMS of ≈ 37 µV (see derivations.test.ts)
      expect(maxRel(stored.power, scipyStageMean(planted[k], FS, epochs))).toBeLessThan(2e-3);
    }
  });
});

describe('a refused scoring file', () => {
  it('is one line for ingest_errors and the summary, every problem in it, the unknown text by its hash only', async () => {
    const scoring = path.join(tmp.dir, 'psg-scoring.csv');
    writeFileSync(scoring, 'Epoch;Stage\n1;W\n2;Quillfeather\n4;N2\n');
    const e = await processRecording({ ...rec('psg', file), scoringPath: scoring }, resolveIngestParams({ fit: null })).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(PipelineError);
    expect((e as PipelineError).step).toBe('scoring');
    const message = (e as PipelineError).message;
    expect(message).not.toMatch(/[\r\n]/);
    expect(message).toBe(`${scoring}: 1 scoring problem: row 3, column 'Epoch': epoch 4 is not the next epoch (3)`);
    writeFileSync(scoring, 'Epoch;Stage\n1;W\n2;Quillfeather\n3;Sleep stage 5\n');
    const two = (await processRecording({ ...rec('psg', file), scoringPath: scoring }, resolveIngestParams({ fit: null })).catch((x: unknown) => x)) as Error;
    expect(two.message).not.toMatch(/[\r\n]/);
    expect(two.message).toMatch(/^.*psg-scoring\.csv: 2 scoring problems: unknown stage label \(text #[0-9a-f]{8}, row 2\).*; unknown stage label/);
    expect(two.message).not.toContain('Quillfeather');
  });
});
