// Health-data rule (house rules; EDF+ 2003 §2.1.3.3–4 puts name, birth date and patient code in
// the identification fields): a fake patient name and birth date in the header must never
// appear in anything the reader returns — header, signals, annotations, warnings — nor in any
// error message, for well-formed and broken files alike.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf } from '../../ingest/edf/reader.ts';
import { parseEdfHeader } from '../../ingest/edf/header.ts';
import { FAKE_BIRTHDATE, FAKE_HOSPITAL, FAKE_PATIENT_CODE, FAKE_PATIENT_NAME, goodEdfPlusSpec, handEdf, makeTmpDir } from './helpers.ts';

const SECRETS = [FAKE_PATIENT_NAME, FAKE_BIRTHDATE, FAKE_PATIENT_CODE, FAKE_HOSPITAL, 'Quillfeather', 'Zebediah', '1952'];

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('privacy');
});
afterAll(() => tmp?.cleanup());

function expectClean(text: string): void {
  for (const s of SECRETS) expect(text).not.toContain(s);
}

describe('identification text never leaves the reader', () => {
  it('the raw file does hold the fake name and birth date (the test is meaningful)', () => {
    const raw = Buffer.from(handEdf(goodEdfPlusSpec())).toString('latin1');
    expect(raw).toContain(FAKE_PATIENT_NAME);
    expect(raw).toContain(FAKE_BIRTHDATE);
  });

  it('nothing returned by openEdf, readEpochs or parseEdfHeader contains them', async () => {
    const path = join(tmp.dir, 'named.edf');
    const bytes = handEdf(goodEdfPlusSpec());
    writeFileSync(path, bytes);
    const f = await openEdf(path);
    try {
      const { readEpochs: _r, close: _c, ...data } = f;
      expectClean(JSON.stringify(data, (_k, v) => (v instanceof Float64Array ? Array.from(v) : v)));
      expectClean(JSON.stringify(Object.values(f)));
      for await (const b of f.readEpochs({ signals: [0, 1], epochS: 0.5 })) expectClean(JSON.stringify(b));
    } finally {
      await f.close();
    }
    expectClean(JSON.stringify(parseEdfHeader(bytes, 'named.edf', bytes.length)));
  });

  it('warnings about a malformed or non-ASCII identification withhold the content', async () => {
    const h = goodEdfPlusSpec();
    h.patient = `${FAKE_PATIENT_NAME}\xe9`; // one subfield only, plus a non-ASCII byte
    h.recording = `${FAKE_HOSPITAL}`; // does not start with "Startdate"
    const path = join(tmp.dir, 'odd-id.edf');
    writeFileSync(path, handEdf(h));
    const f = await openEdf(path);
    try {
      expect(f.header.warnings).toEqual([
        { field: 'local patient identification', message: 'holds bytes outside printable ASCII (content withheld)' },
        { field: 'local patient identification', message: 'does not follow the EDF+ subfield layout (content withheld)' },
        { field: 'local recording identification', message: 'does not follow the EDF+ subfield layout (content withheld)' },
      ]);
      expectClean(JSON.stringify(f.header));
    } finally {
      await f.close();
    }
  });

  it('error messages of broken files with identification text do not contain it', async () => {
    const breakers: ((h: ReturnType<typeof goodEdfPlusSpec>) => void)[] = [
      (h) => (h.signals[1].pmax = h.signals[1].pmin),
      (h) => (h.date = 'xx.xx.xx'),
      (h) => (h.headerBytes = '999'),
      (h) => (h.signals[0].dmin = '5000'),
      (h) => (h.nRecords = '9'),
    ];
    for (const [i, brk] of breakers.entries()) {
      const h = goodEdfPlusSpec();
      brk(h);
      const path = join(tmp.dir, `broken-${i}.edf`);
      writeFileSync(path, handEdf(h));
      const err = await openEdf(path).then(
        () => null,
        (e: unknown) => e as Error,
      );
      expect(err).not.toBeNull();
      expectClean(`${err!.message} ${JSON.stringify(err)}`);
    }
  });
});
