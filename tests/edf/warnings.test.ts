// What the reader accepts with a compromise is kept as a warning { field, message } on the header
// (header.warnings) and on the file (EdfFile.warnings = the header's, then the reader's own). Each
// file is built byte by byte from the EDF 1992 / EDF+ 2003 field table (helpers.ts), with one
// departure from the standard; each check asserts the exact warning. No warning quotes
// identification text or non-ASCII header content.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf, type EdfFile } from '../../ingest/edf/reader.ts';
import { toMicrovolts } from '../../src/core/montage/channel-selection.ts';
import { concat, goodBdfPlusSpec, goodDigital24, goodEdfPlusSpec, goodRecord, handEdf, int16le, makeTmpDir, type HandEdf } from './helpers.ts';

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('warn');
});
afterAll(() => tmp?.cleanup());

let counter = 0;
async function opened(h: HandEdf): Promise<EdfFile> {
  const path = join(tmp.dir, `w-${++counter}.edf`);
  writeFileSync(path, handEdf(h));
  const f = await openEdf(path);
  await f.close();
  return f;
}

function edit(change: (h: HandEdf) => void, base: HandEdf = goodEdfPlusSpec()): HandEdf {
  change(base);
  return base;
}

describe('header warnings', () => {
  it('"µV" spelled with a non-ASCII µ is read as µV (STANDARDS.md: treat 0xB5 as µ), with a warning naming the spelling', async () => {
    const cases: [string, string][] = [
      ['\xb5V', 'the Latin-1 byte B5'],
      ['\xc2\xb5V', 'UTF-8 bytes C2 B5 (micro sign)'],
      ['\xce\xbcV', 'UTF-8 bytes CE BC (Greek mu)'],
    ];
    for (const [dim, spelling] of cases) {
      const f = await opened(edit((h) => (h.signals[0].dim = h.signals[1].dim = dim)));
      expect(f.header.signals[0].physicalDimension).toBe('µV');
      expect(f.header.signals[1].physicalDimension).toBe('µV');
      expect(toMicrovolts(f.header.signals[0].physicalDimension)).toBe(1); // the pipeline takes it as µV
      expect(f.warnings).toEqual([
        { field: 'physical dimension', message: `signals 1, 2: "µ" written as ${spelling} (EDF asks for ASCII, e.g. "uV"); read as µ` },
      ]);
    }
    // plain ASCII "uV" and "mV" need no warning
    expect((await opened(edit((h) => (h.signals[1].dim = 'mV')))).warnings).toEqual([]);
  });

  it('BDF+ with "µV" as the Latin-1 byte B5 and a record count of −1: both read, both said, the 24-bit samples exact', async () => {
    const h = edit((b) => {
      b.signals[0].dim = '\xb5V';
      b.nRecords = '-1';
    }, goodBdfPlusSpec(3));
    const path = join(tmp.dir, 'latin1-minus-one.bdf');
    writeFileSync(path, handEdf(h));
    const f = await openEdf(path);
    try {
      expect(f.header.variant).toBe('BDF+C');
      expect(f.header.nRecords).toBe(3);
      expect(f.header.signals[0].physicalDimension).toBe('µV');
      expect(f.warnings).toEqual([
        { field: 'physical dimension', message: 'signal 1: "µ" written as the Latin-1 byte B5 (EDF asks for ASCII, e.g. "uV"); read as µ' },
        { field: 'number of data records', message: 'number of data records is -1 (unknown); 3 records derived from the file size' },
      ]);
      // signal 0 has gain 1, offset 0 (helpers.ts): the physical values are the planted digital ones
      const got: number[] = [];
      for await (const b of f.readEpochs({ signals: [0], epochS: 0.5 })) if (b.data) got.push(...b.data[0]);
      expect(got).toEqual([0, 1, 2].flatMap((r) => goodDigital24(r)[0]));
    } finally {
      await f.close();
    }
  });

  it('other non-ASCII bytes in signal fields: one warning per field naming the signals; content withheld except the label (kept as Latin-1)', async () => {
    const f = await opened(
      edit((h) => {
        h.signals[0].label = 'EEG C3-M2\xe9';
        h.signals[1].transducer = 'Elektrode \xfc';
        h.signals[0].prefilter = 'HP:0.3Hz \xb1';
        h.signals[1].prefilter = 'LP:35Hz \xb1';
        h.signals[0].dim = 'uV\xa0';
      }),
    );
    expect(f.header.signals[0].label).toBe('EEG C3-M2é');
    expect(f.warnings).toEqual([
      { field: 'label', message: 'signal 1: holds bytes outside printable ASCII; read as Latin-1' },
      { field: 'prefiltering', message: 'signals 1, 2: holds bytes outside printable ASCII (content withheld)' },
      { field: 'physical dimension', message: 'signal 1: holds bytes outside printable ASCII; read as Latin-1 (content withheld)' },
      { field: 'transducer type', message: 'signal 2: holds bytes outside printable ASCII (content withheld)' },
    ]);
    expect(JSON.stringify(f.warnings)).not.toMatch(/Elektrode|HP:0|LP:35/);
  });

  it('a warning about many signals names ten and counts the rest', async () => {
    const base = goodEdfPlusSpec(1);
    const many = Array.from({ length: 14 }, (_, k) => ({ ...base.signals[1], label: `EEG E${k + 1}`, pmin: '-1e2' }));
    const f = await opened({
      ...base,
      signals: [...many, base.signals[2]],
      data: concat([...many.map(() => int16le([1, 2])), goodRecord(0, '+0\x14\x14\x00').subarray(12)]),
    });
    expect(f.warnings).toEqual([
      {
        field: 'physical minimum',
        message: 'signals 1, 2, 3, 4, 5, 6, 7, 8, 9, 10 and 4 more: written with an exponent (EDF+ asks for plain decimals); read as a number',
      },
    ]);
    expect(f.header.signals[13].physicalMin).toBe(-100);
  });

  it('a record duration written with an exponent', async () => {
    const f = await opened(edit((h) => (h.duration = '5E-1')));
    expect(f.header.recordDurationS).toBe(0.5);
    expect(f.warnings).toEqual([
      { field: 'duration of a data record', message: 'written with an exponent ("5E-1"; EDF+ asks for plain decimals); read as 0.5 s' },
    ]);
  });

  it('EDF+C without an annotation signal: record onsets k·duration', async () => {
    const base = goodEdfPlusSpec(2);
    const f = await opened({ ...base, signals: base.signals.slice(0, 2), data: concat([0, 1].map((r) => goodRecord(r, '').subarray(0, 12))) });
    expect(f.warnings).toEqual([{ field: 'reserved', message: 'EDF+C file without a signal labelled "EDF Annotations"; record onsets taken as k·duration' }]);
    expect(Array.from(f.recordOnsetsS)).toEqual([0, 0.5]);
  });

  it('plain EDF: non-ASCII bytes in the reserved field are reported, not quoted', async () => {
    const f = await opened(edit((h) => (h.reserved = 'Ger\xe4t 7')));
    expect(f.header.variant).toBe('EDF');
    expect(f.warnings).toContainEqual({ field: 'reserved', message: 'holds bytes outside printable ASCII (content withheld)' });
  });

  it('BDF whose reserved field is not "24BIT": read as plain BDF with a warning', async () => {
    const base = goodBdfPlusSpec(2);
    const f = await opened({ ...base, reserved: 'BIOSEMI-XYZ', signals: base.signals.slice(0, 2), data: new Uint8Array(2 * 18) });
    expect(f.header.variant).toBe('BDF');
    expect(f.warnings).toEqual([{ field: 'reserved', message: 'a BDF file should have "24BIT" here; read as plain BDF (content withheld)' }]);
  });
});

describe("warnings of the reader (EdfFile.warnings after the header's)", () => {
  /** EDF+D with records at the given onsets (0.5-s records, goodEdfPlusSpec's layout). */
  function discontinuous(onsets: string[]): HandEdf {
    const h = goodEdfPlusSpec(onsets.length);
    h.reserved = 'EDF+D';
    h.data = concat(onsets.map((t, r) => goodRecord(r, `+${t}\x14\x14\x00`)));
    return h;
  }

  it('EDF+D gaps: how many and their total length', async () => {
    const f = await opened(discontinuous(['0', '0.5', '3', '3.5', '10', '10.5']));
    expect(f.gaps.map((g) => [g.startS, g.endS])).toEqual([
      [1, 3],
      [4, 10],
    ]);
    expect(f.header.warnings).toEqual([]);
    expect(f.warnings).toEqual([{ field: 'annotations', message: '2 gaps between data records, 8 s in total; epochs that touch a gap are dropped' }]);
  });

  it('a segment that starts off the sample grid is read from the nearest sample, and said so', async () => {
    // 8-Hz and 4-Hz signals: a segment starting at 3.1 s is 0.2 of an 8-Hz sample (25 ms) and 0.4 of a 4-Hz sample (100 ms) off the grid of the first
    const f = await opened(discontinuous(['0', '0.5', '3.1', '3.6']));
    expect(f.warnings).toEqual([
      { field: 'annotations', message: '1 gap between data records, 2.1 s in total; epochs that touch a gap are dropped' },
      {
        field: 'annotations',
        message: '1 of 1 segments after a gap start off the sample grid of the first record (by up to 100 ms); their epochs are read from the nearest sample',
      },
    ]);
  });

  it("the header's warnings come first, then the reader's", async () => {
    const h = discontinuous(['0', '0.5', '3', '3.5']);
    h.nRecords = '-1';
    const f = await opened(h);
    expect(f.warnings).toEqual([
      { field: 'number of data records', message: 'number of data records is -1 (unknown); 4 records derived from the file size' },
      { field: 'annotations', message: '1 gap between data records, 2 s in total; epochs that touch a gap are dropped' },
    ]);
    expect(f.header.warnings).toEqual(f.warnings.slice(0, 1));
  });
});
