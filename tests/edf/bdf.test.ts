// BDF and BDF+ (24-bit samples; facts in shared/STANDARDS.md) through the same streaming reader.
// Outside references: Debian's libedf (EDFlib 1.23) writes BDF+ files (EDFLIB_FILETYPE_BDFPLUS,
// edflib.h) and reads BDF and BDF+ (filetype 2 and 3, edflib.h); plain BDF files (EDFlib 1.23
// writes only EDF+ and BDF+) are laid out byte by byte in helpers.ts from the field table, and
// their hashes are checked against coreutils' sha256sum.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf, type EdfFile } from '../../ingest/edf/reader.ts';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import { compileWithLibedf, parseReaderOutput, READER_SOURCE, writerSource, type RefAnnotation, type RefSignal } from './libedf.ts';
import { concat, goodBdfPlusSpec, goodBdfRecord, goodDigital24, handEdf, int24le, makeTmpDir, talBytes } from './helpers.ts';

const SECONDS = 20;
// 24-bit digital ranges: full (±2^23), reduced and asymmetric; 256, 128 and 200 Hz in one file.
const BDF_SIGNALS: RefSignal[] = [
  {
    label: 'EEG C3-M2',
    dim: 'uV',
    pmin: -262144,
    pmax: 262143,
    dmin: -8388608,
    dmax: 8388607,
    fs: 256,
    expr: '150.0*sin(2*M_PI*7.0*t) + 0.001*(double)(i % 13)',
  },
  {
    label: 'EOG LOC-M2',
    dim: 'uV',
    pmin: -3000,
    pmax: 5000,
    dmin: -500000,
    dmax: 600000,
    fs: 128,
    expr: '200.0*cos(2*M_PI*0.7*t) - 50.0 + (double)((i*7) % 5)',
  },
  // exceeds ±100 µV half of the time: EDFlib clips those samples to the digital limits
  { label: 'EMG chin', dim: 'uV', pmin: -100, pmax: 100, dmin: -8388608, dmax: 8388607, fs: 200, expr: '130.0*sin(2*M_PI*0.5*t) + 0.37*(double)((i*37) % 11)' },
];
const BDF_ANNOTATIONS: RefAnnotation[] = [
  { onset100us: 0, duration100us: -1, text: 'Recording starts' },
  { onset100us: 15000, duration100us: 10000, text: 'Lights off' },
  { onset100us: 123456, duration100us: -1, text: 'Ünïcødé ✓ 睡眠 stage N2' },
  { onset100us: 50000, duration100us: 300000, text: 'Sleep stage N2' },
];

let tmp: ReturnType<typeof makeTmpDir>;
let readerExe: string;
let bdfFile: string;
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
  return parts.map((p) => Float32Array.from(p.flatMap((x) => Array.from(x))));
}

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

const step = (s: { pmin: number; pmax: number; dmin: number; dmax: number }) => (s.pmax - s.pmin) / (s.dmax - s.dmin);
const sha256sum = (file: string) => execFileSync('sha256sum', [file], { encoding: 'utf8' }).split(' ')[0];

function save(name: string, bytes: Uint8Array): string {
  const path = join(tmp.dir, name);
  writeFileSync(path, bytes);
  return path;
}

/** Runs the libedf reader on a file: header, annotations, physical samples of every signal. */
function libedfRead(path: string) {
  const rawOut = `${path}.libedf.raw`;
  const ref = parseReaderOutput(execFileSync(readerExe, [path, rawOut], { encoding: 'utf8' }));
  return {
    ref,
    samples: readRaw(
      rawOut,
      ref.signals.map((s) => s.samples),
    ),
  };
}

beforeAll(() => {
  tmp = makeTmpDir('bdf');
  // If gcc or libedf is missing these throw and every test below fails (no skip).
  const writerExe = compileWithLibedf(
    tmp.dir,
    'bdf_writer',
    writerSource(BDF_SIGNALS, BDF_ANNOTATIONS, SECONDS, 'Fictional_Testperson', { fileType: 'EDFLIB_FILETYPE_BDFPLUS' }),
  );
  readerExe = compileWithLibedf(tmp.dir, 'ref_reader', READER_SOURCE);
  bdfFile = join(tmp.dir, 'libedf.bdf');
  execFileSync(writerExe, [bdfFile, join(tmp.dir, 'libedf.raw')]);
  rawValues = readRaw(
    join(tmp.dir, 'libedf.raw'),
    BDF_SIGNALS.map((s) => s.fs * SECONDS),
  );
});
afterAll(() => tmp?.cleanup());

describe('BDF+ written by libedf (EDFLIB_FILETYPE_BDFPLUS)', () => {
  it('the file is BDF+ as STANDARDS.md describes it: byte 0xFF "BIOSEMI", reserved "BDF+C", a "BDF Annotations" signal', () => {
    const bytes = readFileSync(bdfFile);
    expect(bytes[0]).toBe(0xff);
    expect(bytes.subarray(1, 8).toString('latin1')).toBe('BIOSEMI');
    expect(bytes.subarray(192, 197).toString('latin1')).toBe('BDF+C');
    expect(
      bytes
        .subarray(256 + 16 * 3, 256 + 16 * 4)
        .toString('latin1')
        .trim(),
    ).toBe('BDF Annotations');
  });

  it('header: variant BDF+C, 3 bytes per sample, 24-bit digital limits, rates and record layout', async () => {
    const f = await openEdf(bdfFile);
    try {
      expect(f.header.variant).toBe('BDF+C');
      expect(f.header.bytesPerSample).toBe(3);
      expect(f.header.startDate).toBe('2003-04-05T22:30:15');
      expect(f.header.nRecords).toBe(SECONDS);
      const ordinary = f.header.signals.filter((s) => !s.isAnnotation);
      expect(ordinary.map((s) => s.label)).toEqual(BDF_SIGNALS.map((s) => s.label));
      expect(ordinary.map((s) => s.fsHz)).toEqual([256, 128, 200]);
      expect(ordinary.map((s) => [s.physicalMin, s.physicalMax, s.digitalMin, s.digitalMax])).toEqual(BDF_SIGNALS.map((s) => [s.pmin, s.pmax, s.dmin, s.dmax]));
      expect(f.header.signals.filter((s) => s.isAnnotation).map((s) => s.label)).toEqual(['BDF Annotations']);
      expect(Array.from(f.recordOnsetsS)).toEqual(Array.from({ length: SECONDS }, (_, k) => k));
      expect(f.durationS).toBe(SECONDS);
      expect(f.warnings).toEqual([]);
    } finally {
      await f.close();
    }
  });

  it('samples equal the values libedf was given within one digital step; chunk size changes nothing', async () => {
    const f = await openEdf(bdfFile);
    try {
      const got = await readAll(f, [0, 1, 2], 5);
      BDF_SIGNALS.forEach((s, k) => {
        const clipped = Array.from(rawValues[k], (v) => Math.min(s.pmax, Math.max(s.pmin, v)));
        expect(got[k].length).toBe(s.fs * SECONDS);
        // one digital step, plus float32 rounding of the physical value (2^-24 relative)
        expect(maxAbsDiff(got[k], clipped)).toBeLessThanOrEqual(step(s) + 6e-8 * Math.max(Math.abs(s.pmin), Math.abs(s.pmax)));
      });
      // the 24-bit resolution is really used: EEG errors well below a 16-bit step of the same range (8 µV)
      expect(maxAbsDiff(got[0], rawValues[0])).toBeLessThan(0.05);
      // one record per read, an odd 3001-byte chunk (records of 1752 bytes: BDF chunks can have odd lengths)
      for (const chunkBytes of [1, 3001]) {
        const again = await readAll(f, [2, 0], 2, chunkBytes);
        expect(Array.from(again[0])).toEqual(Array.from(got[2]));
        expect(Array.from(again[1])).toEqual(Array.from(got[0]));
      }
    } finally {
      await f.close();
    }
  });

  it('annotations (onset, duration, UTF-8 text) equal those given to edfwrite_annotation_utf8', async () => {
    const f = await openEdf(bdfFile);
    try {
      const want = BDF_ANNOTATIONS.map((a) => ({ onsetS: a.onset100us / 1e4, durationS: a.duration100us < 0 ? null : a.duration100us / 1e4, texts: [a.text] }));
      const byOnset = (x: { onsetS: number }, y: { onsetS: number }) => x.onsetS - y.onsetS;
      expect([...f.annotations].sort(byOnset)).toEqual([...want].sort(byOnset));
    } finally {
      await f.close();
    }
  });

  it('libedf reads the same samples (float32 rounding only) and the clipped ones are counted at the digital limits', async () => {
    const { ref, samples } = libedfRead(bdfFile);
    expect(ref.filetype).toBe(3); // EDFLIB_FILETYPE_BDFPLUS
    const f = await openEdf(bdfFile);
    try {
      const mine = await readAll(f, [0, 1, 2], 4);
      for (let k = 0; k < 3; k++)
        expect(maxAbsDiff(mine[k], samples[k])).toBeLessThanOrEqual(6e-8 * Math.max(Math.abs(BDF_SIGNALS[k].pmin), BDF_SIGNALS[k].pmax));
      const counted = [0, 0, 0];
      for await (const b of f.readEpochs({ signals: [0, 1, 2], epochS: 4 })) b.atDigitalLimits!.forEach((n, k) => (counted[k] += n));
      const atLimits = BDF_SIGNALS.map(
        (s, k) => Array.from(samples[k]).filter((v) => Math.abs(v - s.pmin) < step(s) / 2 || Math.abs(v - s.pmax) < step(s) / 2).length,
      );
      expect(atLimits[2]).toBeGreaterThan(500);
      expect(counted).toEqual(atLimits);
    } finally {
      await f.close();
    }
  });

  it('SHA-256 of the file equals sha256sum, also with a 3-byte tail after the last record', async () => {
    const f = await openEdf(bdfFile, { sha256: true });
    await f.close();
    expect(f.sha256).toBe(sha256sum(bdfFile));
    const tailed = save('tailed.bdf', concat([readFileSync(bdfFile), Uint8Array.of(1, 2, 3)]));
    const g = await openEdf(tailed, { sha256: true });
    await g.close();
    expect(g.header.nRecords).toBe(SECONDS);
    expect(g.warnings).toEqual([
      {
        field: 'file',
        message: `3 bytes after the last data record (less than one ${(256 + 128 + 200) * 3 + g.header.signals[3].samplesPerRecord * 3}-byte record) are ignored`,
      },
    ]);
    expect(g.sha256).toBe(sha256sum(tailed));
  });

  it('with its mark replaced by "24BIT" it is plain BDF: the same samples, the annotation signal kept with a warning; libedf agrees it is BDF', async () => {
    const bytes = readFileSync(bdfFile);
    bytes.write('24BIT', 192, 'latin1'); // reserved field at byte 192 (EDF 1992 §2.1: 8+80+80+8+8+8)
    const plain = save('plain.bdf', bytes);
    expect(libedfRead(plain).ref.filetype).toBe(2); // EDFLIB_FILETYPE_BDF
    const f = await openEdf(plain);
    try {
      expect(f.header.variant).toBe('BDF');
      expect(f.header.bytesPerSample).toBe(3);
      expect(f.warnings).toEqual([{ field: 'label', message: 'signal 4: labelled "BDF Annotations" in a plain BDF file; read as an annotation signal' }]);
      const got = await readAll(f, [1], 10);
      expect(maxAbsDiff(got[0], rawValues[1])).toBeLessThanOrEqual(step(BDF_SIGNALS[1]) + 1e-4);
    } finally {
      await f.close();
    }
  });
});

describe('a BDF+ copy of an EDF+ recording (both written by libedf from the same physical values)', () => {
  // 16-bit EDF+: ±500 µV over ±32767 (step 0.0153 µV); 24-bit BDF+: the same range over ±8388607.
  const sig = (fsHz: number, expr: string, bits: 16 | 24): RefSignal => ({
    label: 'EEG C4-M1',
    dim: 'uV',
    pmin: -500,
    pmax: 500,
    dmin: bits === 16 ? -32767 : -8388607,
    dmax: bits === 16 ? 32767 : 8388607,
    fs: fsHz,
    expr,
  });
  const expr = '40.0*sin(2*M_PI*11.0*t) + 25.0*sin(2*M_PI*2.3*t + 1.0) + 0.01*(double)((i*7919) % 1009)';

  it('gives the same samples within one digital step of the EDF', async () => {
    const files: string[] = [];
    for (const [name, bits, fileType] of [
      ['copy.edf', 16, 'EDFLIB_FILETYPE_EDFPLUS'],
      ['copy.bdf', 24, 'EDFLIB_FILETYPE_BDFPLUS'],
    ] as const) {
      const exe = compileWithLibedf(
        tmp.dir,
        `copy_${bits}`,
        writerSource([sig(256, expr, bits)], [{ onset100us: 0, duration100us: 300000, text: 'Sleep stage W' }], 60, 'X', { fileType }),
      );
      files.push(join(tmp.dir, name));
      execFileSync(exe, [files[files.length - 1], join(tmp.dir, `${name}.raw`)]);
    }
    const [edf, bdf] = await Promise.all(files.map((p) => openEdf(p)));
    try {
      expect([edf.header.variant, bdf.header.variant]).toEqual(['EDF+C', 'BDF+C']);
      const [a] = await readAll(edf, [0], 30);
      const [b] = await readAll(bdf, [0], 30);
      expect(a.length).toBe(256 * 60);
      const edfStep = 1000 / 65534;
      expect(maxAbsDiff(a, b)).toBeLessThanOrEqual(edfStep + 1e-5); // + float32 rounding of values below 70 µV
      // and not identical: the BDF keeps what the EDF rounded away
      expect(maxAbsDiff(a, b)).toBeGreaterThan(edfStep / 10);
      expect(bdf.annotations).toEqual(edf.annotations);
    } finally {
      await Promise.all([edf.close(), bdf.close()]);
    }
  });
});

describe('plain BDF and BDF+D built byte by byte (helpers.ts)', () => {
  // BDF: 3-byte two's complement, LSB first; phys = pmin + (dig − dmin)·(pmax − pmin)/(dmax − dmin) (EDF 1992 §2.2)
  const phys = (dig: number, pmin: number, pmax: number, dmin: number, dmax: number) => pmin + ((dig - dmin) * (pmax - pmin)) / (dmax - dmin);

  it('"24BIT" file: digital values across the whole 24-bit range decode exactly (sign extension), and libedf reads the same', async () => {
    const spec = goodBdfPlusSpec(4);
    const plain = handEdf({
      ...spec,
      reserved: '24BIT',
      signals: spec.signals.slice(0, 2),
      data: concat([0, 1, 2, 3].map((r) => goodBdfRecord(r, '').subarray(0, 18))),
    });
    const path = save('hand.bdf', plain);
    const f = await openEdf(path, { sha256: true });
    try {
      expect(f.header.variant).toBe('BDF');
      expect(f.warnings).toEqual([]);
      expect(f.sha256).toBe(sha256sum(path));
      const got = await readAll(f, [0, 1], 2);
      const want0 = [0, 1, 2, 3].flatMap((r) => goodDigital24(r)[0]); // gain 1, offset 0: physical = digital
      const want1 = [0, 1, 2, 3].flatMap((r) => goodDigital24(r)[1].map((d) => Math.fround(phys(d, -1000, 1000, -8388608, 8388607))));
      expect(Array.from(got[0])).toEqual(want0);
      expect(Array.from(got[1])).toEqual(want1);
      // the extremes of the 24-bit range, and negative values, come back as written
      expect(want0.slice(0, 4)).toEqual([1, -2, 8388607, -8388608]);
      expect(Math.min(...want1)).toBeLessThan(-900); // −8000000 of ±8388608 over ±1000 µV
      const { ref, samples } = libedfRead(path);
      expect(ref.filetype).toBe(2); // EDFLIB_FILETYPE_BDF
      expect(maxAbsDiff(samples[0], got[0])).toBeLessThanOrEqual(0.5); // float32 rounding of values up to 8.4e6
      expect(maxAbsDiff(samples[1], got[1])).toBeLessThanOrEqual(1e-4);
    } finally {
      await f.close();
    }
  });

  it('BDF+D: record onsets from the time-keeping TALs in 3-byte samples, the gap reported, epochs across it dropped', async () => {
    const spec = goodBdfPlusSpec(4);
    spec.reserved = 'BDF+D';
    spec.data = concat([
      goodBdfRecord(0, '+0\x14\x14\x00'),
      goodBdfRecord(1, '+0.5\x14\x14\x00+0.6\x14Spindle\x14\x00'),
      goodBdfRecord(2, '+3\x14\x14\x00'),
      goodBdfRecord(3, '+3.5\x14\x14\x00'),
    ]);
    const f = await openEdf(save('gap.bdf', handEdf(spec)));
    try {
      expect(f.header.variant).toBe('BDF+D');
      expect(Array.from(f.recordOnsetsS)).toEqual([0, 0.5, 3, 3.5]);
      expect(f.gaps).toEqual([{ afterRecord: 1, startS: 1, endS: 3 }]);
      expect(f.annotations).toEqual([{ onsetS: 0.6, durationS: null, texts: ['Spindle'] }]);
      expect(f.warnings).toEqual([{ field: 'annotations', message: '1 gap between data records, 2 s in total; epochs that touch a gap are dropped' }]);
      const blocks: (string | null)[] = [];
      for await (const b of f.readEpochs({ signals: [1], epochS: 1 })) blocks.push(b.dropReason ?? String(b.data![0][0]));
      const first = (r: number) => String(Math.fround(phys(goodDigital24(r)[1][0], -1000, 1000, -8388608, 8388607)));
      expect(blocks).toEqual([first(0), 'gap', 'gap', first(2)]);
    } finally {
      await f.close();
    }
  });

  it('a 16-kB-and-larger BDF+ record: annotation bytes read in slices give the same annotations, the hash its own pass', async () => {
    const records: Uint8Array[] = [];
    for (let r = 0; r < 3; r++)
      records.push(
        int24le(Array.from({ length: 6000 }, (_, i) => ((i * 37 + r * 11) % 400001) - 200000)),
        talBytes(`+${r}\x14\x14\x00+${r}.25\x14Event ${r}\x14\x00`, 60),
      );
    const path = save(
      'big.bdf',
      handEdf({
        version: '\xffBIOSEMI',
        patient: 'X X X X',
        recording: 'Startdate X X X X',
        date: '01.01.20',
        time: '22.00.00',
        reserved: 'BDF+C',
        nRecords: '3',
        duration: '1',
        signals: [
          { label: 'EEG C3', dim: 'uV', pmin: '-200', pmax: '200', dmin: '-8388608', dmax: '8388607', spr: '6000' },
          { label: 'BDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-8388608', dmax: '8388607', spr: '20' },
        ],
        data: concat(records),
      }),
    );
    const f = await openEdf(path, { sha256: true });
    await f.close();
    expect(f.annotations).toEqual([0, 1, 2].map((r) => ({ onsetS: r + 0.25, durationS: null, texts: [`Event ${r}`] })));
    expect(f.sha256).toBe(sha256sum(path));
  });
});

describe('a separate scoring file can be BDF+', () => {
  it('readScoring takes the stages from a .bdf annotation file written by libedf', async () => {
    const stages: RefAnnotation[] = ['W', 'W', '1', '2', '2', '3', 'R', 'R'].map((s, e) => ({
      onset100us: e * 300000,
      duration100us: 300000,
      text: `Sleep stage ${s}`,
    }));
    const exe = compileWithLibedf(
      tmp.dir,
      'scoring_bdf',
      writerSource([{ label: 'Pleth', dim: '', pmin: -1, pmax: 1, dmin: -8388608, dmax: 8388607, fs: 1, expr: '0' }], stages, 240, 'X', {
        fileType: 'EDFLIB_FILETYPE_BDFPLUS',
      }),
    );
    const path = join(tmp.dir, 'scoring.bdf');
    execFileSync(exe, [path, join(tmp.dir, 'scoring.raw')]);
    const h = await readScoring(path);
    expect(h.stages).toEqual(['W', 'W', 'N1', 'N2', 'N2', 'N3', 'R', 'R']);
    expect(h.source).toBe('annotations:scoring.bdf');
  });
});
