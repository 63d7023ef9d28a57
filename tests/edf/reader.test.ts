// Reader checks on hand-built files (bytes laid out from the EDF 1992 / EDF+ 2003 field table in
// helpers.ts, not by our writer): exact physical values from the spec's scaling formula,
// annotations, EDF+D gaps and the epoch grid, buffer reuse and chunking.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf, type EpochBlock } from '../../ingest/edf/reader.ts';
import { concat, goodDigital, goodEdfPlusSpec, goodRecord, handEdf, int16le, makeTmpDir, talBytes } from './helpers.ts';

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('reader');
});
afterAll(() => tmp?.cleanup());

function save(name: string, bytes: Uint8Array): string {
  const path = join(tmp.dir, name);
  writeFileSync(path, bytes);
  return path;
}

// EDF 1992 §2.2: phys = pmin + (dig − dmin)·(pmax − pmin)/(dmax − dmin), computed here in float64.
const phys = (dig: number, pmin: number, pmax: number, dmin: number, dmax: number) => pmin + ((dig - dmin) * (pmax - pmin)) / (dmax - dmin);

async function collect(
  gen: AsyncGenerator<EpochBlock>,
): Promise<{ epoch: number; onsetS: number; dropReason: EpochBlock['dropReason']; data: number[][] | null }[]> {
  const out = [];
  for await (const b of gen) out.push({ epoch: b.epoch, onsetS: b.onsetS, dropReason: b.dropReason, data: b.data ? b.data.map((d) => Array.from(d)) : null });
  return out;
}

describe('hand-built EDF+C file', () => {
  it('header fields as written, scaling by the EDF formula, annotations without the time-keeping TALs', async () => {
    const f = await openEdf(save('good.edf', handEdf(goodEdfPlusSpec(4))));
    try {
      const h = f.header;
      expect(h.variant).toBe('EDF+C');
      expect(h.startDate).toBe('2004-03-12T23:01:59');
      expect(h.headerBytes).toBe(1024);
      expect(h.nRecords).toBe(4);
      expect(h.recordDurationS).toBe(0.5);
      const [eeg, emg, ann] = h.signals;
      expect(eeg).toMatchObject({
        index: 0,
        label: 'EEG C3-M2',
        transducer: 'AgAgCl cup',
        physicalDimension: 'uV',
        physicalMin: -204.8,
        physicalMax: 204.7,
        digitalMin: -2048,
        digitalMax: 2047,
        prefilter: 'HP:0.3Hz LP:35Hz',
        samplesPerRecord: 4,
        fsHz: 8,
        isAnnotation: false,
      });
      expect(eeg.gain).toBeCloseTo(0.1, 12);
      expect(eeg.offset).toBeCloseTo(phys(0, -204.8, 204.7, -2048, 2047), 12);
      expect(emg.fsHz).toBe(4);
      expect(ann.isAnnotation).toBe(true);
      expect(f.annotations).toEqual([{ onsetS: 0.75, durationS: 0.25, texts: ['Arousal'] }]);
      expect(Array.from(f.recordOnsetsS)).toEqual([0, 0.5, 1, 1.5]);
      expect(f.durationS).toBe(2);

      // 1-s epochs = 2 records; signals requested in reverse order.
      const blocks = await collect(f.readEpochs({ signals: [1, 0], epochS: 1 }));
      expect(blocks.map((b) => [b.epoch, b.onsetS, b.dropReason])).toEqual([
        [0, 0, null],
        [1, 1, null],
      ]);
      for (const b of blocks) {
        const want0: number[] = [];
        const want1: number[] = [];
        for (const r of [2 * b.epoch, 2 * b.epoch + 1]) {
          const [d0, d1] = goodDigital(r);
          want0.push(...d0.map((d) => Math.fround(phys(d, -204.8, 204.7, -2048, 2047))));
          want1.push(...d1.map((d) => Math.fround(phys(d, -100, 100, -2048, 2047))));
        }
        expect(b.data![0]).toEqual(want1);
        expect(b.data![1]).toEqual(want0);
      }
    } finally {
      await f.close();
    }
  });

  it('a trailing partial epoch is reported as "end"; buffers are reused between yields (documented)', async () => {
    const f = await openEdf(save('good5.edf', handEdf(goodEdfPlusSpec(5))));
    try {
      const seen: Float32Array[] = [];
      const reasons: (string | null)[] = [];
      for await (const b of f.readEpochs({ signals: [0], epochS: 1, chunkBytes: 42 })) {
        reasons.push(b.dropReason);
        if (b.data) seen.push(b.data[0]);
      }
      expect(reasons).toEqual([null, null, 'end']);
      expect(seen[0]).toBe(seen[1]); // same array object, refilled
      expect(seen[0][0]).toBeCloseTo(phys(goodDigital(2)[0][0], -204.8, 204.7, -2048, 2047), 4);
    } finally {
      await f.close();
    }
  });

  it('negative gain (physical max below physical min) is scaled by the same formula', async () => {
    const h = goodEdfPlusSpec(2);
    h.signals[1].pmin = '100';
    h.signals[1].pmax = '-100';
    const f = await openEdf(save('neg.edf', handEdf(h)));
    try {
      const [b] = await collect(f.readEpochs({ signals: [1], epochS: 1 }));
      expect(b.data![0]).toEqual([...goodDigital(0)[1], ...goodDigital(1)[1]].map((d) => Math.fround(phys(d, 100, -100, -2048, 2047))));
    } finally {
      await f.close();
    }
  });
});

describe('EDF+D with gaps (EDF+ 2003 §2.1.3.1, record onsets from the time-keeping TALs)', () => {
  // 0.5-s records with onsets 0, 0.5 | 3, 3.5, 4, 4.5, 5 | 7.25, 7.75, 8.25, 8.75 (two gaps).
  const onsets = [0, 0.5, 3, 3.5, 4, 4.5, 5, 7.25, 7.75, 8.25, 8.75];
  function build(): Uint8Array {
    const h = goodEdfPlusSpec();
    h.reserved = 'EDF+D';
    h.nRecords = String(onsets.length);
    h.data = concat(onsets.map((t, r) => goodRecord(r, r === 3 ? `+${t}\x14\x14\x00+3.6\x14Spindle\x14\x00` : `+${t}\x14\x14\x00`)));
    return handEdf(h);
  }

  it('reports the gaps, and epochs touching a gap get data null / "gap", never joined', async () => {
    const f = await openEdf(save('disc.edf', build()));
    try {
      expect(f.header.variant).toBe('EDF+D');
      expect(Array.from(f.recordOnsetsS)).toEqual(onsets);
      expect(f.gaps).toEqual([
        { afterRecord: 1, startS: 1, endS: 3 },
        { afterRecord: 6, startS: 5.5, endS: 7.25 },
      ]);
      expect(f.durationS).toBe(9.25);
      expect(f.annotations).toEqual([{ onsetS: 3.6, durationS: null, texts: ['Spindle'] }]);
      const blocks = await collect(f.readEpochs({ signals: [0], epochS: 1 }));
      expect(blocks.map((b) => [b.epoch, b.onsetS, b.dropReason])).toEqual([
        [0, 0, null],
        [1, 1, 'gap'],
        [2, 2, 'gap'],
        [3, 3, null],
        [4, 4, null],
        [5, 5, 'gap'],
        [6, 6, 'gap'],
        [7, 7, 'gap'],
        [8, 8, null],
        [9, 9, 'end'],
      ]);
      const p = (r: number) => goodDigital(r)[0].map((d) => Math.fround(phys(d, -204.8, 204.7, -2048, 2047)));
      expect(blocks[3].data![0]).toEqual([...p(2), ...p(3)]);
      expect(blocks[4].data![0]).toEqual([...p(4), ...p(5)]);
      // Epoch 8 = [8, 9) s lies in the third segment (7.25 … 9.25): records 8 (from 8.25) and 9 less its tail.
      // 8 s is 0.75 s = 6 samples after 7.25 s: the last 2 samples of record 8, all of record 9, the first 2 of record 10.
      expect(blocks[8].data![0]).toEqual([...p(8).slice(2), ...p(9), ...p(10).slice(0, 2)]);
    } finally {
      await f.close();
    }
  });
});

describe('plain EDF built by hand', () => {
  it('record onsets k·duration, no annotations, identification ignored', async () => {
    const values = Array.from({ length: 6 }, (_, i) => i * 1000 - 2500);
    const bytes = handEdf({
      patient: 'anything at all',
      recording: 'free text',
      date: '01.01.85',
      time: '00.00.00',
      reserved: '',
      nRecords: '3',
      duration: '2',
      signals: [{ label: 'Fp1', dim: 'mV', pmin: '-3.2768', pmax: '3.2767', dmin: '-32768', dmax: '32767', spr: '2' }],
      data: int16le(values),
    });
    const f = await openEdf(save('plain.edf', bytes));
    try {
      expect(f.header.variant).toBe('EDF');
      expect(f.header.startDate).toBe('1985-01-01T00:00:00');
      expect(Array.from(f.recordOnsetsS)).toEqual([0, 2, 4]);
      expect(f.annotations).toEqual([]);
      const blocks = await collect(f.readEpochs({ signals: [0], epochS: 6 }));
      expect(blocks).toHaveLength(1);
      expect(blocks[0].data![0]).toEqual(values.map((d) => Math.fround(phys(d, -3.2768, 3.2767, -32768, 32767))));
    } finally {
      await f.close();
    }
  });

  it('EDF+ year rule: yy = 84 is 2084, yy = 85 is 1985 (EDF+ 2003 §2.1.3.2)', async () => {
    for (const [yy, year] of [
      ['84', '2084'],
      ['85', '1985'],
      ['00', '2000'],
      ['99', '1999'],
    ]) {
      const h = goodEdfPlusSpec();
      h.date = `15.06.${yy}`;
      const f = await openEdf(save(`y${yy}.edf`, handEdf(h)));
      expect(f.header.startDate).toBe(`${year}-06-15T23:01:59`);
      await f.close();
    }
  });

  it('an annotation-only EDF+C file (record duration 0) opens with its annotations', async () => {
    const h = goodEdfPlusSpec();
    h.duration = '0';
    h.signals = [h.signals[2]];
    h.nRecords = '2';
    h.data = concat([talBytes('+0\x14\x14\x00+30\x1530\x14Sleep stage N1\x14\x00', 30), talBytes('+0\x14\x14\x00+60\x1530\x14Sleep stage N2\x14\x00', 30)]);
    const f = await openEdf(save('annot-only.edf', handEdf(h)));
    try {
      expect(f.header.recordDurationS).toBe(0);
      expect(f.annotations).toEqual([
        { onsetS: 30, durationS: 30, texts: ['Sleep stage N1'] },
        { onsetS: 60, durationS: 30, texts: ['Sleep stage N2'] },
      ]);
    } finally {
      await f.close();
    }
  });
});

describe('large records: annotation bytes fetched by positioned reads of just those bytes', () => {
  it('an EDF+D file with 20-kB records gives the same onsets, gaps, annotations and samples', async () => {
    const spr = 10_000; // 20,000 bytes per record, above the whole-record read size
    const onsets = [0, 1, 2, 10, 11];
    const records = onsets.map((t, r) => {
      const v = Array.from({ length: spr }, (_, i) => ((i * 31 + r * 7) % 4001) - 2000);
      const tal = r === 3 ? `+${t}\x14\x14\x00+10.5\x152\x14Spindle ✓\x14\x00` : `+${t}\x14\x14\x00`;
      return concat([int16le(v), talBytes(tal, 40)]);
    });
    const bytes = handEdf({
      patient: 'X X X X',
      recording: 'Startdate X X X X',
      date: '01.02.03',
      time: '04.05.06',
      reserved: 'EDF+D',
      nRecords: String(onsets.length),
      duration: '1',
      signals: [
        { label: 'EEG Cz', dim: 'uV', pmin: '-2000', pmax: '2001', dmin: '-2000', dmax: '2001', spr: String(spr) },
        { label: 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-32768', dmax: '32767', spr: '20' },
      ],
      data: concat(records),
    });
    const f = await openEdf(save('big.edf', bytes));
    try {
      expect(Array.from(f.recordOnsetsS)).toEqual(onsets);
      expect(f.gaps).toEqual([{ afterRecord: 2, startS: 3, endS: 10 }]);
      expect(f.annotations).toEqual([{ onsetS: 10.5, durationS: 2, texts: ['Spindle ✓'] }]);
      const blocks = await collect(f.readEpochs({ signals: [0], epochS: 1, chunkBytes: 50_000 }));
      expect(blocks.map((b) => b.dropReason)).toEqual([null, null, null, 'gap', 'gap', 'gap', 'gap', 'gap', 'gap', 'gap', null, null]);
      // pmin = dmin and pmax = dmax: physical equals digital (gain 1).
      expect(blocks[10].data![0].slice(0, 3)).toEqual([21 - 2000, 52 - 2000, 83 - 2000]);
    } finally {
      await f.close();
    }
  });
});
