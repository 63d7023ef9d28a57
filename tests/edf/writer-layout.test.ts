// Header layout against the field widths of the EDF specification (Kemp et al. 1992, §2.1
// table: fixed part 8,80,80,8,8,8,44,8,8,4 = 256 bytes; per signal 16,80,8,8,8,8,8,80,8,32 =
// 256 bytes, each field stored ns times in a row) and EDF+ (Kemp & Olivan 2003: "EDF+C" in the
// reserved field, "EDF Annotations" signal, time-keeping TAL first in every record). Plus writer
// behaviour: streaming record count, annotation placement, clipping.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FIXED_FIELDS, SIGNAL_FIELDS } from '../../ingest/edf/header.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { EdfWriter, formatHeaderNumber, writeEdfFile, type EdfWriteSpec } from '../../src/simulation/edf-writer.ts';
import { makeTmpDir } from './helpers.ts';

// Widths copied from the EDF 1992 header table (the specification, not our code).
const SPEC_FIXED = [8, 80, 80, 8, 8, 8, 44, 8, 8, 4];
const SPEC_SIGNAL = [16, 80, 8, 8, 8, 8, 8, 80, 8, 32];

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('writer');
});
afterAll(() => tmp?.cleanup());

const spec: EdfWriteSpec = {
  variant: 'EDF+C',
  startDate: '2010-07-04T01:02:03',
  recordDurationS: 2,
  signals: [
    { label: 'EEG O2-M1', physicalDimension: 'uV', physicalMin: -250, physicalMax: 250, samplesPerRecord: 10, transducer: 'cup', prefilter: 'HP:0.3Hz' },
    { label: 'ECG II', physicalDimension: 'mV', physicalMin: -5, physicalMax: 5, digitalMin: -1000, digitalMax: 1000, samplesPerRecord: 4 },
  ],
  annotations: [
    { onsetS: 0.5, durationS: 30, text: 'Sleep stage W' },
    { onsetS: 3, durationS: null, text: 'A' },
    { onsetS: 3.25, durationS: 1.5, text: 'B' },
    { onsetS: 3.5, durationS: null, text: 'C' },
  ],
};

describe('header layout: EDF 1992 field widths', () => {
  it('our field tables carry exactly the widths of the specification', () => {
    expect(FIXED_FIELDS.map(([, w]) => w)).toEqual(SPEC_FIXED);
    expect(SPEC_FIXED.reduce((a, b) => a + b)).toBe(256);
    expect(SIGNAL_FIELDS.map(([, w]) => w)).toEqual(SPEC_SIGNAL);
    expect(SPEC_SIGNAL.reduce((a, b) => a + b)).toBe(256);
  });

  it('a written file has every field at the byte offset the specification gives', async () => {
    const path = join(tmp.dir, 'layout.edf');
    const data = [new Float32Array(30), new Float32Array(12)];
    await writeEdfFile(path, spec, data);
    const b = readFileSync(path).toString('latin1');
    const fixedAt = (i: number) => SPEC_FIXED.slice(0, i).reduce((a, c) => a + c, 0);
    const fixed = (i: number) => b.slice(fixedAt(i), fixedAt(i) + SPEC_FIXED[i]);
    expect(fixed(0)).toBe('0'.padEnd(8));
    expect(fixed(1)).toBe('X X X X'.padEnd(80));
    expect(fixed(2)).toBe('Startdate X X X X'.padEnd(80));
    expect(fixed(3)).toBe('04.07.10');
    expect(fixed(4)).toBe('01.02.03');
    expect(fixed(5)).toBe(String(256 + 3 * 256).padEnd(8));
    expect(fixed(6)).toBe('EDF+C'.padEnd(44));
    expect(fixed(7)).toBe('3'.padEnd(8)); // filled in by close()
    expect(fixed(8)).toBe('2'.padEnd(8));
    expect(fixed(9)).toBe('3'.padEnd(4));
    const ns = 3;
    const sigAt = (field: number, sig: number) => 256 + SPEC_SIGNAL.slice(0, field).reduce((a, c) => a + c, 0) * ns + sig * SPEC_SIGNAL[field];
    const sig = (field: number, s: number) => b.slice(sigAt(field, s), sigAt(field, s) + SPEC_SIGNAL[field]);
    expect([0, 1, 2].map((s) => sig(0, s).trimEnd())).toEqual(['EEG O2-M1', 'ECG II', 'EDF Annotations']);
    expect(sig(1, 0).trimEnd()).toBe('cup');
    expect([0, 1, 2].map((s) => sig(2, s).trimEnd())).toEqual(['uV', 'mV', '']);
    expect([0, 1].map((s) => [sig(3, s), sig(4, s), sig(5, s), sig(6, s)].map((x) => x.trimEnd()))).toEqual([
      ['-250', '250', '-32768', '32767'],
      ['-5', '5', '-1000', '1000'],
    ]);
    expect(sig(7, 0).trimEnd()).toBe('HP:0.3Hz');
    expect([0, 1].map((s) => sig(8, s).trimEnd())).toEqual(['10', '4']);
    expect(sig(9, 2)).toBe(' '.repeat(32));
    expect(b.length).toBe(1024 + 3 * (2 * (10 + 4 + Number(sig(8, 2)))));

    // EDF+ 2003 §2.2.4: each record's annotation bytes start with the time-keeping TAL "+<2k>\x14\x14\x00".
    const annBytes = 2 * Number(sig(8, 2));
    const recB = 2 * (10 + 4) + annBytes;
    const ann = (r: number) => b.slice(1024 + r * recB + 28, 1024 + (r + 1) * recB);
    expect(ann(0).startsWith('+0\x14\x14\x00+0.5\x1530\x14Sleep stage W\x14\x00')).toBe(true);
    expect(ann(1)).toBe('+2\x14\x14\x00+3\x14A\x14\x00+3.25\x151.5\x14B\x14\x00+3.5\x14C\x14\x00'.padEnd(annBytes, '\x00'));
    expect(ann(2)).toBe('+4\x14\x14\x00'.padEnd(annBytes, '\x00'));
  });
});

describe('writer behaviour', () => {
  it('streams records, clips out-of-range values to the digital limits, and reads back', async () => {
    const path = join(tmp.dir, 'stream.edf');
    const w = await EdfWriter.open(path, { ...spec, annotations: [] });
    const eeg = new Float32Array(20).map((_, i) => (i - 10) * 40); // −400 … 360 µV, beyond ±250
    await w.writeRecords([eeg, new Float32Array(8).fill(1.2345)]);
    // Before close the header says −1 records (EDF 1992 §2.1: unknown while recording).
    expect(readFileSync(path).toString('latin1').slice(236, 244)).toBe('-1'.padEnd(8));
    await w.writeRecords([eeg, new Float32Array(8).fill(-9)]);
    await w.close();
    const f = await openEdf(path);
    try {
      expect(f.header.nRecords).toBe(4);
      const got: number[][] = [[], []];
      for await (const b of f.readEpochs({ signals: [0, 1], epochS: 2 })) b.data!.forEach((d, k) => got[k].push(...d));
      const step = 500 / 65535;
      const want = [...eeg, ...eeg].map((v) => Math.min(250, Math.max(-250, v)));
      want.forEach((v, i) => expect(Math.abs(got[0][i] - v)).toBeLessThanOrEqual(step / 2 + 1e-4));
      expect(got[1].slice(0, 8).every((v) => Math.abs(v - 1.2345) <= 0.005)).toBe(true);
      expect(got[1].slice(8).every((v) => v === -5)).toBe(true);
    } finally {
      await f.close();
    }
  });

  it('refuses annotations that lie after the last written record', async () => {
    const path = join(tmp.dir, 'late.edf');
    const w = await EdfWriter.open(path, { ...spec, annotations: [{ onsetS: 100, durationS: null, text: 'late' }] });
    await w.writeRecords([new Float32Array(10), new Float32Array(4)]);
    await expect(w.close()).rejects.toThrow(/1 annotations have onsets after the last of 1 records/);
  });

  it('formats header numbers into 8 characters without exponent', () => {
    expect(formatHeaderNumber(-3276.8, 8)).toBe('-3276.8');
    expect(formatHeaderNumber(0.000012345, 8)).toBe('0.000012');
    expect(formatHeaderNumber(1 / 3, 8)).toBe('0.333333');
    expect(formatHeaderNumber(123456789, 8)).toBeNull();
  });
});
