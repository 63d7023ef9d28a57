// A sampling rate that is not a whole number of Hz (199.8 Hz: 999 samples in 5-s data records,
// EDF 1992 §2.1 allows any record duration), in a plain EDF built byte by byte from the field
// table (tests/edf/helpers.ts, not our writer), scored by a per-epoch text file. The default 4-s
// Welch segment holds 799.2 samples: refused in one line that says what would work; a 5-s
// segment (999 samples) is ingested and its spectrum checked against scipy.signal.welch of the
// planted physical values. Then 30-s epochs over 7-s EDF+C data records: the scoring's onsets
// (0, 30, 60 … s) fall inside records, so every epoch is cut out of several records.
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { PipelineError, processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import { concat, handEdf, int16le, makeTmpDir } from '../edf/helpers.ts';
import { runPython } from '../helpers/python.ts';

const SPR = 999;
const RECORD_S = 5;
const FS = SPR / RECORD_S; // 199.8 Hz
const EPOCHS = 8;
const N_RECORDS = (EPOCHS * 30) / RECORD_S;
// EDF 1992 §2.2: phys = pmin + (dig − dmin)·(pmax − pmin)/(dmax − dmin)
const [PMIN, PMAX, DMIN, DMAX] = [-500, 500, -32768, 32767];
const phys = (d: number) => PMIN + ((d - DMIN) * (PMAX - PMIN)) / (DMAX - DMIN);

let tmp: ReturnType<typeof makeTmpDir>;
let rec: CohortRecording;
const planted = new Float64Array(N_RECORDS * SPR);

beforeAll(() => {
  tmp = makeTmpDir('odd-rates');
  // digital values: a 10-Hz sine plus a deterministic hash-like noise (fractional part of a scaled sine)
  const digital = new Int16Array(N_RECORDS * SPR);
  for (let i = 0; i < digital.length; i++) {
    const u = Math.sin(i * 12.9898) * 43758.5453;
    digital[i] = Math.round(1200 * Math.sin((2 * Math.PI * 10 * i) / FS) + 4000 * (u - Math.floor(u) - 0.5));
    planted[i] = phys(digital[i]);
  }
  const records = Array.from({ length: N_RECORDS }, (_, r) => int16le(digital.subarray(r * SPR, (r + 1) * SPR)));
  const bytes = handEdf({
    patient: 'X',
    recording: 'X',
    date: '05.04.03',
    time: '22.30.15',
    reserved: '',
    nRecords: String(N_RECORDS),
    duration: String(RECORD_S),
    signals: [{ label: 'EEG C3-M2', dim: 'uV', pmin: String(PMIN), pmax: String(PMAX), dmin: String(DMIN), dmax: String(DMAX), spr: String(SPR) }],
    data: concat(records),
  });
  const file = path.join(tmp.dir, 'odd.edf');
  writeFileSync(file, bytes);
  const scoring = path.join(tmp.dir, 'odd.txt');
  writeFileSync(scoring, ['W', 'W', 'N2', 'N2', 'N2', 'N2', 'N2', 'N2'].join('\n'));
  rec = { row: 1, subject: 'odd', session: null, group: null, recordingPath: file, scoringPath: scoring, covariates: {} };
});
afterAll(() => tmp?.cleanup());

describe('a 199.8-Hz recording', () => {
  it('with 4-s segments: refused in one line naming the rate, the samples per segment and a segment that works', async () => {
    const e = await processRecording(rec, resolveIngestParams({ fit: null })).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(PipelineError);
    expect((e as PipelineError).step).toBe('spectra');
    expect((e as PipelineError).message).toContain(
      'a 4-s segment at 199.8 Hz is 799.2 samples, not a whole number; every recording shares the 1/segment-Hz grid, so choose a segment length whose samples are whole at this rate (--segment 5: 999 samples) or resample the file',
    );
    expect((e as PipelineError).message).not.toContain('\n');
  });

  it('with 5-s segments: stored on the 0.2-Hz grid, equal to scipy.signal.welch of the planted values over the N2 epochs', async () => {
    const b = await processRecording(rec, resolveIngestParams({ fit: null, segmentS: 5 }));
    expect(b.channels.map((c) => [c.channel, c.fsHz])).toEqual([['C3', FS]]);
    const stored = b.spectra.find((s) => s.channel === 'C3' && s.reference === 'recorded' && s.stage === 'N2' && s.averaging === 'mean')!;
    const rejected = new Set(b.rejections.filter((r) => r.channel === 'C3' && r.reference === 'recorded').map((r) => r.epoch));
    const epochs = [2, 3, 4, 5, 6, 7].filter((e) => !rejected.has(e));
    expect(stored.nEpochs).toBe(epochs.length);
    expect(stored.power.length).toBe(226); // 0–45 Hz in 0.2-Hz steps
    const ref = runPython<number[]>(
      `from scipy.signal import welch
x = numpy.fromfile(inputs['x'])
n = 5994
ps = [welch(x[e*n:(e+1)*n], fs=999/5, window='hann', nperseg=999, noverlap=500, detrend='constant', scaling='density')[1] for e in ${JSON.stringify(epochs)}]
print(json.dumps(numpy.mean(ps, axis=0)[:226].tolist()))`,
      { x: planted },
    );
    let worst = 0;
    for (let k = 1; k < ref.length; k++) worst = Math.max(worst, Math.abs(stored.power[k] - ref[k]) / ref[k]);
    expect(worst).toBeLessThan(1e-5); // float32 storage
  });
});

describe('30-s epochs over 7-s data records (EDF+C, stage annotations off the record grid)', () => {
  it('stores the annotated stages and an N2 spectrum equal to scipy.signal.welch over epochs that span records', async () => {
    const fs = 100;
    const spr = 7 * fs;
    const nRec = 35; // 245 s: 8 whole epochs and 5 s the last epoch is cut short in
    const stages = ['W', 'W', '2', '2', '2', '2', '2', '2'];
    const digital = new Int16Array(nRec * spr);
    const x = new Float64Array(nRec * spr);
    for (let i = 0; i < digital.length; i++) {
      const u = Math.sin(i * 78.233) * 43758.5453;
      digital[i] = Math.round(3000 * Math.sin((2 * Math.PI * 10 * i) / fs) + 8000 * (u - Math.floor(u) - 0.5));
      x[i] = phys(digital[i]);
    }
    const talWidth = 600; // 300 two-byte samples per record
    const records = Array.from({ length: nRec }, (_, r) => {
      // EDF+ 2003 §2.2.4: the time-keeping TAL first, the stage annotations in record 0
      let tal = `+${r * 7}\x14\x14\x00`;
      if (r === 0) tal += stages.map((st, e) => `+${e * 30}\x1530\x14Sleep stage ${st}\x14\x00`).join('');
      const bytes = new Uint8Array(talWidth);
      bytes.set(Buffer.from(tal, 'latin1'));
      return concat([int16le(digital.subarray(r * spr, (r + 1) * spr)), bytes]);
    });
    const file = path.join(tmp.dir, 'seven.edf');
    writeFileSync(
      file,
      handEdf({
        patient: 'X X X X',
        recording: 'Startdate X X X X',
        date: '05.04.03',
        time: '22.30.15',
        reserved: 'EDF+C',
        nRecords: String(nRec),
        duration: '7',
        signals: [
          { label: 'EEG C4-M1', dim: 'uV', pmin: String(PMIN), pmax: String(PMAX), dmin: String(DMIN), dmax: String(DMAX), spr: String(spr) },
          { label: 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-32768', dmax: '32767', spr: String(talWidth / 2) },
        ],
        data: concat(records),
      }),
    );
    const b = await processRecording({ ...rec, subject: 'seven', recordingPath: file, scoringPath: null }, resolveIngestParams({ fit: null }));
    expect(b.epochs.stage).toEqual(['W', 'W', 'N2', 'N2', 'N2', 'N2', 'N2', 'N2', 'unscored']);
    expect(b.epochs.dropReason?.[8]).toBe('recording-end');
    const rejected = new Set(b.rejections.filter((r) => r.channel === 'C4' && r.reference === 'recorded').map((r) => r.epoch));
    const epochs = [2, 3, 4, 5, 6, 7].filter((e) => !rejected.has(e));
    const stored = b.spectra.find((s) => s.channel === 'C4' && s.reference === 'recorded' && s.stage === 'N2' && s.averaging === 'mean')!;
    expect(stored.nEpochs).toBe(epochs.length);
    const ref = runPython<number[]>(
      `from scipy.signal import welch
x = numpy.fromfile(inputs['x'])
ps = [welch(x[e*3000:(e+1)*3000], fs=100, window='hann', nperseg=400, noverlap=200, detrend='constant', scaling='density')[1] for e in ${JSON.stringify(epochs)}]
print(json.dumps(numpy.mean(ps, axis=0)[:181].tolist()))`,
      { x },
    );
    let worst = 0;
    for (let k = 1; k < ref.length; k++) worst = Math.max(worst, Math.abs(stored.power[k] - ref[k]) / ref[k]);
    expect(worst).toBeLessThan(1e-5); // float32 storage
  });
});
