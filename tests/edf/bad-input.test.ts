// Bad-input catalogue: one real malformed file per rule of the EDF (Kemp et al. 1992) and EDF+
// (Kemp & Olivan 2003) specifications that the reader enforces. Each file is a hand-built good
// EDF+C file with one thing broken; each check asserts the error class, the field and the value
// named in the message. Then a fast-check property: any mutated header gives a valid header or
// an EdfFormatError, never another exception.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EdfFormatError, EdfIoError } from '../../ingest/edf/errors.ts';
import { parseEdfHeader } from '../../ingest/edf/header.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { BDF_VERSION, concat, goodBdfPlusSpec, goodBdfRecord, goodEdfPlusSpec, goodRecord, handEdf, makeTmpDir, type HandEdf } from './helpers.ts';

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('bad');
});
afterAll(() => tmp?.cleanup());

let counter = 0;
function save(bytes: Uint8Array): string {
  const path = join(tmp.dir, `bad-${++counter}.edf`);
  writeFileSync(path, bytes);
  return path;
}

function variantOf(edit: (h: HandEdf) => void): string {
  const h = goodEdfPlusSpec();
  edit(h);
  return save(handEdf(h));
}

/** Opens the file, expects EdfFormatError naming file, field and value; returns the error. */
async function expectFormatError(path: string, field: string, value: string, extra?: RegExp): Promise<EdfFormatError> {
  let caught: unknown;
  try {
    const f = await openEdf(path);
    await f.close();
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(EdfFormatError);
  const err = caught as EdfFormatError;
  expect(err.file).toBe(path);
  expect(err.field).toBe(field);
  expect(err.value).toBe(value);
  expect(err.message.startsWith(`${path}: `)).toBe(true);
  if (field !== 'file') expect(err.message).toContain(`"${field}"`);
  expect(err.message).toContain(value);
  if (extra) expect(err.message).toMatch(extra);
  return err;
}

describe('bad-input catalogue (each a real malformed file)', () => {
  it('the good base file itself opens cleanly', async () => {
    const f = await openEdf(save(handEdf(goodEdfPlusSpec())));
    expect(f.header.warnings).toEqual([]);
    expect(f.warnings).toEqual([]);
    await f.close();
  });

  it('truncated file: shorter than the 256-byte fixed header', async () => {
    await expectFormatError(save(handEdf(goodEdfPlusSpec()).subarray(0, 200)), 'file', '200', /truncated/);
  });

  it('truncated file: fixed header complete, signal headers cut off', async () => {
    await expectFormatError(save(handEdf(goodEdfPlusSpec()).subarray(0, 700)), 'file', '700', /1024-byte header/);
  });

  it('header byte count that disagrees with 256 + 256·ns (EDF 1992 §2.1)', async () => {
    const e = await expectFormatError(
      variantOf((h) => (h.headerBytes = '1000')),
      'number of bytes in header',
      '1000',
    );
    expect(e.message).toContain('1024');
  });

  it('version other than "0" (EDF) or 0xFF "BIOSEMI" (BDF): the field is not quoted (a file that is not EDF can start with any text)', async () => {
    const e = await expectFormatError(
      variantOf((h) => (h.version = '1')),
      'version',
      'content withheld',
      /not an EDF or BDF file/,
    );
    expect(e.message).not.toMatch(/"1"/);
  });

  // Values made only of digits, signs, dots, commas, colons, spaces and e/E are quoted; others
  // (which could spell a name) are withheld.
  it.each([
    ['number of data records', (h: HandEdf) => (h.nRecords = 'three'), 'content withheld'],
    ['duration of a data record', (h: HandEdf) => (h.duration = '0,5'), '0,5'],
    ['number of signals', (h: HandEdf) => (h.ns = 'x3'), 'content withheld'],
    ['number of bytes in header', (h: HandEdf) => (h.headerBytes = '1O24'), 'content withheld'],
    ['number of data records', (h: HandEdf) => (h.nRecords = '1.5'), '1.5'],
  ])('non-numeric fixed field: %s', async (field, edit, value) => {
    await expectFormatError(variantOf(edit), field, value, /not (an integer|a number)/);
  });

  it.each([
    ['physical minimum', 'pmin', '-20a.8', 'content withheld'],
    ['physical maximum', 'pmax', '', ''],
    ['digital minimum', 'dmin', '-2048.5', '-2048.5'],
    ['digital maximum', 'dmax', '2k', 'content withheld'],
    ['number of samples in each data record', 'spr', 'four', 'content withheld'],
  ] as const)('non-numeric signal field: %s of signal 1', async (field, key, value, shown) => {
    const e = await expectFormatError(
      variantOf((h) => (h.signals[0][key] = value)),
      field,
      shown,
    );
    expect(e.message).toContain('signal 1 ("EEG C3-M2")');
  });

  it('digital minimum not below digital maximum (EDF+ 2003 §2.1.3.5)', async () => {
    const e = await expectFormatError(
      variantOf((h) => {
        h.signals[1].dmin = '100';
        h.signals[1].dmax = '100';
      }),
      'digital minimum',
      '100',
    );
    expect(e.message).toContain('header field "digital minimum" of signal 2 ("EMG chin"): digital minimum 100 is not below digital maximum 100');
  });

  it('digital limit outside 16 bits', async () => {
    await expectFormatError(
      variantOf((h) => (h.signals[0].dmax = '40000')),
      'digital maximum',
      '40000',
      /16-bit/,
    );
  });

  it('physical minimum equal to physical maximum', async () => {
    await expectFormatError(
      variantOf((h) => {
        h.signals[0].pmin = '50';
        h.signals[0].pmax = '50.0';
      }),
      'physical minimum',
      '50',
      /equals physical maximum 50\.0/,
    );
  });

  it('zero signals', async () => {
    await expectFormatError(save(handEdf({ ...goodEdfPlusSpec(), signals: [], data: new Uint8Array(0) })), 'number of signals', '0', /at least one signal/);
  });

  it.each(['0', '-4'])('samples per record %s (not positive)', async (spr) => {
    await expectFormatError(
      variantOf((h) => (h.signals[1].spr = spr)),
      'number of samples in each data record',
      spr,
      /not positive/,
    );
  });

  it('record count larger than the file holds', async () => {
    const e = await expectFormatError(
      variantOf((h) => (h.nRecords = '5')),
      'number of data records',
      '5',
    );
    expect(e.message).toMatch(/hold 3 records of 42 bytes/);
  });

  it('record count smaller than the file holds', async () => {
    await expectFormatError(
      variantOf((h) => (h.nRecords = '1')),
      'number of data records',
      '1',
    );
  });

  it('a final partial record is tolerated with a warning and ignored', async () => {
    const expected = {
      '3': { field: 'file', message: '20 bytes after the last data record (less than one 42-byte record) are ignored' },
      '4': { field: 'file', message: 'the last data record is incomplete (20 of 42 bytes) and is ignored' },
    };
    for (const nRecords of ['3', '4'] as const) {
      const h = goodEdfPlusSpec();
      h.nRecords = nRecords;
      h.data = concat([h.data, goodRecord(3, '+1.5\x14\x14\x00').subarray(0, 20)]);
      const f = await openEdf(save(handEdf(h)));
      expect(f.header.nRecords).toBe(3);
      expect(f.header.warnings).toEqual([expected[nRecords]]);
      expect(f.warnings).toEqual([expected[nRecords]]);
      let epochs = 0;
      for await (const b of f.readEpochs({ signals: [0], epochS: 0.5 })) if (b.data) epochs++;
      expect(epochs).toBe(3);
      await f.close();
    }
  });

  it('record count -1 is derived from the file size with a warning', async () => {
    const f = await openEdf(variantOf((h) => (h.nRecords = '-1')));
    expect(f.header.nRecords).toBe(3);
    expect(f.header.warnings).toEqual([
      { field: 'number of data records', message: 'number of data records is -1 (unknown); 3 records derived from the file size' },
    ]);
    await f.close();
  });

  it.each([
    ['start date', (h: HandEdf) => (h.date = '32.01.04'), '32.01.04'],
    ['start date', (h: HandEdf) => (h.date = '29.02.03'), '29.02.03'],
    ['start date', (h: HandEdf) => (h.date = '12-03-04'), '12-03-04'],
    ['start time', (h: HandEdf) => (h.time = '25.00.00'), '25.00.00'],
    ['start time', (h: HandEdf) => (h.time = '23:01:59'), '23:01:59'],
  ])('bad %s', async (field, edit, value) => {
    await expectFormatError(variantOf(edit), field, value);
  });

  function withRecordTal(r: number, tal: string): string {
    const h = goodEdfPlusSpec();
    const records = [0, 1, 2].map((k) => (k === r ? goodRecord(k, tal) : goodRecord(k, `+${k * 0.5}\x14\x14\x00`)));
    h.data = concat(records);
    return save(handEdf(h));
  }

  it('annotation onset with a bad character (EDF+ 2003 §2.2.2: only + - . 0-9)', async () => {
    const e = await expectFormatError(
      withRecordTal(2, '+1.0\x14\x14\x00+1.2a\x14Spindle\x14\x00'),
      'annotations',
      'TAL 2',
      /TAL 2: the onset \(5 bytes, content withheld\) is not a signed number/,
    );
    expect(e.record).toBe(2);
    expect(e.message).toContain('data record 3');
    expect(e.message).not.toContain('1.2a');
  });

  it('annotation onset without a sign', async () => {
    await expectFormatError(withRecordTal(1, '+0.5\x14\x14\x0012\x14Spindle\x14\x00'), 'annotations', 'TAL 2', /signed number/);
  });

  it('annotation duration with a sign', async () => {
    await expectFormatError(
      withRecordTal(1, '+0.5\x14\x14\x00+0.6\x15-3\x14Spindle\x14\x00'),
      'annotations',
      '+0.6',
      /TAL 2 at onset \+0\.6: the duration \(2 bytes, content withheld\) is not an unsigned number/,
    );
  });

  it('annotation onset not followed by \\x14', async () => {
    await expectFormatError(withRecordTal(1, '+0.5\x14\x14\x00+0.6\x00'), 'annotations', '+0.6', /not followed by \\x14/);
  });

  it('annotation list crossing the record end (no closing \\x00)', async () => {
    await expectFormatError(withRecordTal(1, '+0.5\x14\x14\x00+0.6\x14' + 'x'.repeat(17) + '\x14'), 'annotations', '+0.6', /must not cross records/);
  });

  it('annotation text that is not UTF-8', async () => {
    const h = goodEdfPlusSpec();
    const rec = goodRecord(1, '+0.5\x14\x14\x00+0.6\x14AB\x14\x00');
    rec[12 + 12] = 0xff; // 12 sample bytes, then "A" after the 12 bytes "+0.5\x14\x14\x00+0.6\x14": an invalid UTF-8 byte
    h.data = concat([goodRecord(0, '+0\x14\x14\x00'), rec, goodRecord(2, '+1\x14\x14\x00')]);
    await expectFormatError(save(handEdf(h)), 'annotations', '+0.6', /UTF-8/);
  });

  it('EDF+C record whose first TAL is not a time-keeping one', async () => {
    await expectFormatError(withRecordTal(0, '+0\x14Lights off\x14\x00'), 'annotations', '0', /time-keeping TAL/);
  });

  it('EDF+C record onsets that are not contiguous', async () => {
    await expectFormatError(withRecordTal(2, '+5\x14\x14\x00'), 'annotations', '5', /contiguity/);
  });

  it('EDF+D without time-keeping TALs', async () => {
    const h = goodEdfPlusSpec();
    h.reserved = 'EDF+D';
    h.data = concat([0, 1, 2].map((k) => goodRecord(k, `+${k}\x14Event ${k}\x14\x00`)));
    const e = await expectFormatError(save(handEdf(h)), 'annotations', '0', /EDF\+D record starts with TAL 1 at onset 0 instead of a time-keeping TAL/);
    expect(e.record).toBe(0);
    expect(e.message).not.toContain('Event');
  });

  it('EDF+D without any annotation signal', async () => {
    const h = goodEdfPlusSpec();
    h.reserved = 'EDF+D';
    h.signals = h.signals.slice(0, 2);
    h.data = new Uint8Array(0);
    h.nRecords = '0';
    await expectFormatError(save(handEdf(h)), 'reserved', 'EDF+D', /needs a signal labelled "EDF Annotations"/);
  });

  it('EDF+D records that overlap', async () => {
    const h = goodEdfPlusSpec();
    h.reserved = 'EDF+D';
    h.data = concat([goodRecord(0, '+0\x14\x14\x00'), goodRecord(1, '+2\x14\x14\x00'), goodRecord(2, '+2.25\x14\x14\x00')]);
    await expectFormatError(save(handEdf(h)), 'annotations', '2.25', /overlap/);
  });

  it('epoch length that is not a whole number of samples', async () => {
    const f = await openEdf(save(handEdf(goodEdfPlusSpec())));
    const gen = f.readEpochs({ signals: [0, 1], epochS: 0.3 });
    await expect(gen.next()).rejects.toThrow(/epoch length 0\.3 s at 8 Hz gives 2\.4\d* samples, not a whole number/);
    await expect(f.readEpochs({ signals: [2], epochS: 1 }).next()).rejects.toBeInstanceOf(EdfFormatError);
    await f.close();
  });

  it('a missing file is an EdfIoError naming the file', async () => {
    const path = join(tmp.dir, 'does-not-exist.edf');
    const err = await openEdf(path).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(EdfIoError);
    expect((err as EdfIoError).value).toBe('ENOENT');
    expect((err as EdfIoError).message.startsWith(`${path}: `)).toBe(true);
  });
});

describe('BDF/BDF+ catalogue (24-bit; hand-built from goodBdfPlusSpec, 63-byte records)', () => {
  function bdfVariant(edit: (h: HandEdf) => void): string {
    const h = goodBdfPlusSpec();
    edit(h);
    return save(handEdf(h));
  }

  it('the good BDF+C base opens cleanly', async () => {
    const f = await openEdf(bdfVariant(() => undefined));
    expect([f.header.variant, f.header.bytesPerSample, f.header.nRecords]).toEqual(['BDF+C', 3, 3]);
    expect(f.warnings).toEqual([]);
    await f.close();
  });

  it('digital limit outside 24 bits', async () => {
    await expectFormatError(
      bdfVariant((h) => (h.signals[0].dmax = '8388608')),
      'digital maximum',
      '8388608',
      /outside the 24-bit range -8388608\.\.8388607 of BDF\+C/,
    );
  });

  it('a 24-bit digital limit in a 16-bit EDF file', async () => {
    await expectFormatError(
      variantOf((h) => (h.signals[0].dmin = '-8388608')),
      'digital minimum',
      '-8388608',
      /16-bit range -32768\.\.32767 of EDF\+C/,
    );
  });

  it.each([
    ['an EDF+ mark with the BDF version', (h: HandEdf) => (h.reserved = 'EDF+C'), 'EDF+C', /a mark of EDF files, but the version field is that of BDF/],
    ['BDF+ neither C nor D', (h: HandEdf) => (h.reserved = 'BDF+X'), 'BDF+X', /neither BDF\+C nor BDF\+D/],
  ])('reserved field: %s', async (_, edit, value, extra) => {
    await expectFormatError(bdfVariant(edit), 'reserved', value, extra);
  });

  it.each([
    ['a BDF+ mark with the EDF version "0"', 'BDF+C', /a mark of BDF files, but the version field is that of EDF/],
    ['"24BIT" with the EDF version "0"', '24BIT', /a mark of BDF files/],
  ])('reserved field: %s', async (_, reserved, extra) => {
    await expectFormatError(
      variantOf((h) => (h.reserved = reserved)),
      'reserved',
      reserved,
      extra,
    );
  });

  it('BDF+D without a "BDF Annotations" signal', async () => {
    await expectFormatError(
      bdfVariant((h) => {
        h.reserved = 'BDF+D';
        h.signals = h.signals.slice(0, 2);
        h.nRecords = '0';
        h.data = new Uint8Array(0);
      }),
      'reserved',
      'BDF+D',
      /a BDF\+D file needs a signal labelled "BDF Annotations"/,
    );
  });

  it('an "EDF Annotations" signal in a BDF+ file is an ordinary signal (EDFlib writes "BDF Annotations"): BDF+C without annotations', async () => {
    const f = await openEdf(bdfVariant((h) => (h.signals[2].label = 'EDF Annotations')));
    expect(f.header.signals[2].isAnnotation).toBe(false);
    expect(f.warnings).toEqual([{ field: 'reserved', message: 'BDF+C file without a signal labelled "BDF Annotations"; record onsets taken as k·duration' }]);
    await f.close();
  });

  it('record count larger than the file holds: counted in 3-byte samples', async () => {
    const e = await expectFormatError(
      bdfVariant((h) => (h.nRecords = '4')),
      'number of data records',
      '4',
    );
    expect(e.message).toContain('189 data bytes hold 3 records of 63 bytes');
  });

  it('an incomplete last record and a record count of -1', async () => {
    const f = await openEdf(
      bdfVariant((h) => {
        h.nRecords = '-1';
        h.data = concat([h.data, goodBdfRecord(3, '+1.5\x14\x14\x00').subarray(0, 40)]);
      }),
    );
    expect(f.header.nRecords).toBe(3);
    expect(f.warnings).toEqual([
      { field: 'number of data records', message: 'number of data records is -1 (unknown); 3 records derived from the file size' },
      { field: 'file', message: 'the last data record is incomplete (40 of 63 bytes) and is ignored' },
    ]);
    await f.close();
  });

  it('a version of 0xFF followed by other text is neither EDF nor BDF', async () => {
    await expectFormatError(
      bdfVariant((h) => (h.version = '\xffBIOSEMX')),
      'version',
      'content withheld',
      /not an EDF or BDF file/,
    );
    expect(BDF_VERSION).toBe('\xffBIOSEMI');
  });
});

describe('property: mutated headers give a valid header or an EdfFormatError (fast-check)', () => {
  const base = handEdf(goodEdfPlusSpec());
  // Characters EDF header fields are made of, plus a few hostile ones.
  const charByte = fc.constantFrom(...' 0123456789+-.eEabcxX:,\x00\xff'.split('').map((c) => c.charCodeAt(0)));
  const mutation = fc.oneof(
    fc.record({
      kind: fc.constant('set' as const),
      at: fc.integer({ min: 0, max: base.length - 1 }),
      byte: fc.oneof(charByte, fc.integer({ min: 0, max: 255 })),
    }),
    fc.record({ kind: fc.constant('cut' as const), at: fc.integer({ min: 0, max: base.length }), byte: fc.constant(0) }),
  );

  function mutate(muts: { kind: 'set' | 'cut'; at: number; byte: number }[], from: Uint8Array = base): Uint8Array {
    let b: Uint8Array = from.slice();
    for (const m of muts) {
      if (m.kind === 'set' && m.at < b.length) b[m.at] = m.byte;
      if (m.kind === 'cut') b = b.slice(0, m.at);
    }
    return b;
  }

  function checkValid(h: ReturnType<typeof parseEdfHeader>, bytes: Uint8Array): void {
    expect(['EDF', 'EDF+C', 'EDF+D', 'BDF', 'BDF+C', 'BDF+D']).toContain(h.variant);
    expect(h.bytesPerSample).toBe(h.variant.startsWith('BDF') ? 3 : 2);
    expect(h.startDate).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d$/);
    expect(h.headerBytes).toBe(256 + 256 * h.signals.length);
    expect(h.signals.length).toBeGreaterThan(0);
    expect(h.nRecords).toBeGreaterThanOrEqual(0);
    let recordBytes = 0;
    for (const s of h.signals) {
      expect(s.digitalMin).toBeLessThan(s.digitalMax);
      expect(s.physicalMin).not.toBe(s.physicalMax);
      expect(s.samplesPerRecord).toBeGreaterThan(0);
      expect(Number.isFinite(s.gain) && s.gain !== 0).toBe(true);
      recordBytes += h.bytesPerSample * s.samplesPerRecord;
    }
    expect(h.headerBytes + h.nRecords * recordBytes).toBeLessThanOrEqual(bytes.length);
  }

  // 400 runs over the header (1024 bytes) alone: pure parse, fast.
  it('parseEdfHeader, 400 mutated headers', () => {
    let valid = 0;
    let rejected = 0;
    fc.assert(
      fc.property(fc.array(mutation, { minLength: 1, maxLength: 6 }), (muts) => {
        const bytes = mutate(muts);
        try {
          checkValid(parseEdfHeader(bytes, 'prop.edf', bytes.length), bytes);
          valid++;
        } catch (e) {
          if (!(e instanceof EdfFormatError)) throw e;
          expect(e.message.startsWith('prop.edf: ')).toBe(true);
          rejected++;
        }
      }),
      { numRuns: 400, seed: 20260 },
    );
    // Both outcomes occur, so the property is exercised on each side.
    expect(valid).toBeGreaterThan(20);
    expect(rejected).toBeGreaterThan(20);
  });

  // 150 runs of the whole reader on EDF+ files, 100 on BDF+ files, mutated anywhere (header, samples, annotation bytes).
  it.each([
    ['EDF+C', base, 150, 7],
    ['BDF+C', handEdf(goodBdfPlusSpec()), 100, 24],
  ] as const)('openEdf + readEpochs, mutated %s files', async (_, from, numRuns, seed) => {
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 4 }), async (muts) => {
        const path = save(mutate(muts, from));
        try {
          const f = await openEdf(path);
          try {
            const ordinary = f.header.signals.filter((s) => !s.isAnnotation && s.fsHz > 0).map((s) => s.index);
            if (ordinary.length > 0) for await (const b of f.readEpochs({ signals: ordinary, epochS: f.header.recordDurationS })) void b;
          } finally {
            await f.close();
          }
        } catch (e) {
          if (!(e instanceof EdfFormatError)) throw e;
        }
      }),
      { numRuns, seed },
    );
  });
});
