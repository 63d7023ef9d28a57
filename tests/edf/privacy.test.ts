// Health-data rule (house rules; EDF+ 2003 §2.1.3.3–4 puts name, birth date and patient code in
// the identification fields): a fake patient name and birth date in the header must never
// appear in anything the reader returns — header, signals, annotations, warnings — nor in any
// error message, for well-formed and broken files alike.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf } from '../../ingest/edf/reader.ts';
import { parseEdfHeader } from '../../ingest/edf/header.ts';
import {
  concat,
  FAKE_BIRTHDATE,
  FAKE_HOSPITAL,
  FAKE_PATIENT_CODE,
  FAKE_PATIENT_NAME,
  goodBdfPlusSpec,
  goodBdfRecord,
  goodEdfPlusSpec,
  goodRecord,
  handEdf,
  makeTmpDir,
  type HandEdf,
} from './helpers.ts';

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

// A fake identity as a clinical export could carry it: name, birth date, record number. Placed in
// the patient and recording fields, in a free-text annotation and as the first bytes of files that
// are not EDF; then every error and warning message the reader produces over a catalogue of
// malformed files (and 200 randomly broken ones) must not contain any part of it.
const IDENTITY = 'Jane Testperson 01-JAN-1970 X123';
const IDENTITY_PARTS = ['Jane', 'Testperson', 'JAN', '1970', 'X123'];

function withIdentity(h: HandEdf): HandEdf {
  return { ...h, patient: 'X123 F 01-JAN-1970 Jane_Testperson', recording: `Startdate 01-JAN-2020 ${IDENTITY}` };
}

/** TAL bytes cut or \x00-padded to `width`; U+0001 stands for a raw 0xFF byte (never valid in UTF-8). */
function fit(tal: string, width: number): Uint8Array {
  const out = new Uint8Array(width);
  const enc = Buffer.from(tal, 'utf8').map((b) => (b === 0x01 ? 0xff : b));
  out.set(enc.subarray(0, width));
  return out;
}

/**
 * goodEdfPlusSpec (or its BDF+ twin) with the identity in the header, a 60-sample annotation
 * signal, and `tal1` as record 1's annotation bytes.
 */
function identityFile(tal1: string, bdf = false, edit: (h: HandEdf) => void = () => undefined): Uint8Array {
  const h = withIdentity(bdf ? goodBdfPlusSpec() : goodEdfPlusSpec());
  h.signals[2].spr = '60';
  const width = 60 * (bdf ? 3 : 2);
  const samples = (r: number) => (bdf ? goodBdfRecord(r, '').subarray(0, 18) : goodRecord(r, '').subarray(0, 12));
  h.data = concat([0, 1, 2].map((r) => concat([samples(r), fit(r === 1 ? tal1 : `+${r * 0.5}\x14\x14\x00`, width)])));
  edit(h);
  return handEdf(h);
}

/** Every message the reader gives for a file: the error (message and fields), or the warnings and any error of reading its epochs. */
async function messagesOf(path: string): Promise<string[]> {
  try {
    const f = await openEdf(path, { sha256: true });
    const out = [JSON.stringify(f.warnings), JSON.stringify(f.header.warnings)];
    try {
      const ordinary = f.header.signals.filter((s) => !s.isAnnotation && s.fsHz > 0).map((s) => s.index);
      if (ordinary.length > 0) for await (const b of f.readEpochs({ signals: ordinary, epochS: f.header.recordDurationS })) void b;
    } catch (e) {
      out.push(`${(e as Error).message} ${JSON.stringify(e)}`);
    } finally {
      await f.close();
    }
    return out;
  } catch (e) {
    return [`${(e as Error).message} ${JSON.stringify(e)}`];
  }
}

function expectNoIdentity(messages: string[], what: string): void {
  for (const m of messages) for (const part of IDENTITY_PARTS) expect(m, `${what}: ${m}`).not.toContain(part);
}

describe('a fake identity never appears in an error or warning message', () => {
  const tal = (s: string) => `+0.5\x14\x14\x00${s}`;
  const catalogue: [string, Uint8Array][] = [
    ['good file, identity in header and annotation', identityFile(tal(`+0.6\x14${IDENTITY}\x14\x00`))],
    ['non-ASCII identification', identityFile(tal(`+0.6\x14${IDENTITY}\x14\x00`), false, (h) => (h.patient = `${IDENTITY} \xe9`))],
    ['annotation text where the onset belongs', identityFile(tal(`${IDENTITY}\x14\x00`))],
    ['annotation text as the onset, up to the record end', identityFile(tal(IDENTITY.padEnd(400, 'y')))],
    ['annotation text as the duration', identityFile(tal(`+0.6\x15${IDENTITY}\x14x\x14\x00`))],
    ['annotation text not closed by \\x14', identityFile(tal(`+0.6\x14${IDENTITY}\x00`))],
    ['annotation text running past the record end', identityFile(tal(`+0.6\x14${IDENTITY} `.padEnd(400, 'y')))],
    ['annotation text with an invalid UTF-8 byte', identityFile(tal(`+0.6\x14${IDENTITY}\u0001\x14\x00`))],
    ['EDF+C record starting with the text instead of a time-keeping TAL', identityFile(`+0.5\x14${IDENTITY}\x14\x00`)],
    ['EDF+D record starting with the text instead of a time-keeping TAL', identityFile(`+0.5\x14${IDENTITY}\x14\x00`, false, (h) => (h.reserved = 'EDF+D'))],
    ['BDF+: annotation text where the onset belongs', identityFile(tal(`${IDENTITY}\x14\x00`), true)],
    ['BDF+: annotation text as the duration', identityFile(tal(`+0.6\x15${IDENTITY}\x14x\x14\x00`), true)],
    ['BDF+: record starting with the text', identityFile(`+0.5\x14${IDENTITY}\x14\x00`, true)],
    ['physical maximum equal to minimum', identityFile(tal(''), false, (h) => (h.signals[1].pmax = h.signals[1].pmin))],
    ['record count wrong', identityFile(tal(''), false, (h) => (h.nRecords = '9'))],
    ['header size wrong', identityFile(tal(''), false, (h) => (h.headerBytes = '999'))],
    ['EDF+ mark broken', identityFile(tal(''), false, (h) => (h.reserved = 'EDF+X'))],
    ['BDF mark in an EDF file', identityFile(tal(''), false, (h) => (h.reserved = 'BDF+C'))],
    ['the identity in a number field', identityFile(tal(''), false, (h) => (h.nRecords = 'X123'))],
    ['the identity in the start date and time fields', identityFile(tal(''), false, (h) => ((h.date = '01-JAN-1970'), (h.time = 'Jane')))],
    ['the identity as the version', identityFile(tal(''), false, (h) => (h.version = 'Jane Tes'))],
    ['a text file starting with the identity', new TextEncoder().encode(`${IDENTITY}\n`.repeat(200))],
    ['a short file starting with the identity', new TextEncoder().encode(IDENTITY)],
    ['"0" then the identity everywhere', new TextEncoder().encode(`0       ${IDENTITY} `.repeat(100))],
  ];

  it('the catalogue files really hold the identity (the test is meaningful)', async () => {
    for (const [what, bytes] of catalogue) {
      expect(Buffer.from(bytes).toString('latin1'), what).toMatch(/Jane|X123|1970/);
    }
  });

  it.each(catalogue.map(([what, bytes], i) => [what, bytes, i] as const))('%s', async (what, bytes, i) => {
    const path = join(tmp.dir, `identity-${i}.edf`);
    writeFileSync(path, bytes);
    const messages = await messagesOf(path);
    // every broken file gives an error or a warning (the first, good one gives none)
    if (i > 0)
      expect(
        messages.some((m) => m !== '[]'),
        what,
      ).toBe(true);
    expectNoIdentity(messages, what);
  });

  it("the catalogue reaches the reader's messages: broken annotations are named by record and TAL number", async () => {
    const path = join(tmp.dir, 'identity-position.edf');
    writeFileSync(path, catalogue[2][1]);
    const [message] = await messagesOf(path);
    expect(message).toMatch(
      /data record 2, field "annotations" of signal 3 \("EDF Annotations"\): TAL 2: the onset \(\d+ bytes, content withheld\) is not a signed number/,
    );
  });

  // 200 files, each the good identity file broken by 1–4 byte changes or a cut, none of which
  // touches the identity's own bytes (so it stays whole and greppable).
  it('property: randomly broken files with the identity give no message that contains it (fast-check, 200 files)', async () => {
    const base = identityFile(tal(`+0.6\x14${IDENTITY}\x14\x00`));
    const text = Buffer.from(base).toString('latin1');
    const protectedBytes = new Uint8Array(base.length);
    for (const part of ['Jane', 'Testperson', '01-JAN-1970', 'X123']) {
      for (let at = text.indexOf(part); at >= 0; at = text.indexOf(part, at + 1)) protectedBytes.fill(1, at, at + part.length);
    }
    const free = [...protectedBytes.keys()].filter((i) => protectedBytes[i] === 0);
    const byte = fc.oneof(fc.constantFrom(0x00, 0x14, 0x15, 0x20, 0x2b, 0x2d, 0x2e, 0x30, 0x39, 0xff), fc.integer({ min: 0, max: 255 }));
    const mutation = fc.record({ at: fc.integer({ min: 0, max: free.length - 1 }), byte, cut: fc.boolean() });
    let k = 0;
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 4 }), async (muts) => {
        let b = base.slice();
        for (const m of muts) {
          if (m.cut && free[m.at] > 1100)
            b = b.slice(0, free[m.at]); // cuts inside the data records only
          else b[free[m.at]] = m.byte;
        }
        const path = join(tmp.dir, `mutated-${k++ % 4}.edf`);
        writeFileSync(path, b);
        expectNoIdentity(await messagesOf(path), 'mutated file');
      }),
      { numRuns: 200, seed: 1970 },
    );
  });
});
