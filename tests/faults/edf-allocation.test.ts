// Fuzzing the EDF header parser, the annotation (TAL) parser and the reader's open path for
// allocation (issue 8: "never allocates beyond the file's size"). Extends the property of
// tests/edf/bad-input.test.ts (valid structure or EdfFormatError) with hostile *declarations*:
// record counts, samples per record, signal counts and header sizes far beyond what the bytes
// hold (EDF 1992 §2.1 fields: 8-character record count, 4-character signal count, 8-character
// samples per record; §2.2: 2 bytes per sample, records back to back after the header), for EDF
// and for BDF (3 bytes per sample; version 0xFF "BIOSEMI", shared/STANDARDS.md).
//
// How allocation is checked: while a case runs, the typed-array constructors (Uint8Array,
// Int8Array, Uint16Array, Int16Array, Float32Array, Float64Array), ArrayBuffer and Buffer.alloc /
// allocUnsafe / allocUnsafeSlow are replaced by wrappers that record the byte size of every
// allocation the code under test asks for (global names are looked up at call time, so the
// parser's own `new Uint8Array(n)` goes through the wrapper; Node's internal buffers do not, and
// are not ours). The bound asserted for every case, in bytes:
//   - a Float64Array (the per-record onset tables, 8 bytes per data record) holds at most one
//     entry per 2 bytes of the file (a record carries at least one sample of 2 or 3 bytes);
//   - every other allocation is at most the file's size.
// Neither depends on a declared count: a header declaring 99,999,999 records must not allocate
// in proportion to that. Sizes: 3,000 header cases + 2,000 TAL cases in memory, 300 files
// through openEdf; about 10 s.
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EdfFormatError, EdfIoError } from '../../ingest/edf/errors.ts';
import { parseEdfHeader } from '../../ingest/edf/header.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { parseTals } from '../../ingest/edf/tal.ts';
import { BDF_VERSION, concat, handEdf, int16le, int24le, makeTmpDir, talBytes, type HandEdf } from '../edf/helpers.ts';

interface Alloc {
  kind: string;
  bytes: number;
}

const TYPED = ['Uint8Array', 'Int8Array', 'Uint16Array', 'Int16Array', 'Float32Array', 'Float64Array'] as const;

/** Runs fn with every typed-array / ArrayBuffer / Buffer allocation recorded; restores the originals after. */
async function recordAllocations<T>(fn: () => Promise<T> | T): Promise<{ value: T | undefined; error: unknown; allocs: Alloc[] }> {
  const g = globalThis as unknown as Record<string, unknown>;
  const saved = new Map<string, unknown>();
  const allocs: Alloc[] = [];
  const bytesOf = (args: unknown[], per: number): number => {
    const a = args[0];
    if (typeof a === 'number') return a * per;
    if (a instanceof ArrayBuffer) return 0; // a view on an existing buffer: no new memory
    if (a !== null && typeof a === 'object' && 'length' in a) return Number((a as { length: number }).length) * per;
    return 0;
  };
  for (const name of TYPED) {
    const Ctor = g[name] as { BYTES_PER_ELEMENT: number };
    saved.set(name, Ctor);
    g[name] = new Proxy(Ctor as unknown as object, {
      construct(target, args) {
        allocs.push({ kind: name, bytes: bytesOf(args, Ctor.BYTES_PER_ELEMENT) });
        return Reflect.construct(target as new (...a: unknown[]) => object, args, target as new (...a: unknown[]) => object);
      },
    });
  }
  saved.set('ArrayBuffer', ArrayBuffer);
  g.ArrayBuffer = new Proxy(ArrayBuffer, {
    construct(target, args) {
      allocs.push({ kind: 'ArrayBuffer', bytes: Number(args[0] ?? 0) });
      return Reflect.construct(target, args, target);
    },
  });
  const bufferFns = ['alloc', 'allocUnsafe', 'allocUnsafeSlow'] as const;
  const savedBuffer = bufferFns.map((f) => Buffer[f]);
  for (const [i, f] of bufferFns.entries()) {
    const orig = savedBuffer[i] as (n: number, ...rest: unknown[]) => Buffer;
    (Buffer as unknown as Record<string, unknown>)[f] = (n: number, ...rest: unknown[]) => {
      allocs.push({ kind: `Buffer.${f}`, bytes: n });
      return orig.call(Buffer, n, ...rest);
    };
  }
  try {
    const value = await fn();
    return { value, error: undefined, allocs };
  } catch (error) {
    return { value: undefined, error, allocs };
  } finally {
    for (const [name, v] of saved) g[name] = v;
    for (const [i, f] of bufferFns.entries()) (Buffer as unknown as Record<string, unknown>)[f] = savedBuffer[i];
  }
}

/** The bound of the header comment; returns the offending allocation or null. */
function overBound(allocs: Alloc[], fileBytes: number): Alloc | null {
  for (const a of allocs) {
    const limit = a.kind === 'Float64Array' ? 8 * Math.floor(fileBytes / 2) : fileBytes;
    if (a.bytes > Math.max(limit, 0)) return a;
  }
  return null;
}

// Declared values: plausible ones, the largest each field's width can hold, and the edges
const recordCount = fc.oneof(
  fc.constantFrom('-1', '0', '1', '2', '3', '99999999', '-99999', '1e8', ' 00003'),
  fc.integer({ min: -2, max: 99999999 }).map(String),
);
const samples = fc.oneof(fc.constantFrom('1', '2', '99999999', '0', '-1', '4096'), fc.integer({ min: 1, max: 99999999 }).map(String));
const signalCount = fc.oneof(fc.constantFrom('1', '2', '3', '9999', '0', '-1'), fc.integer({ min: 1, max: 9999 }).map(String));
const duration = fc.constantFrom('1', '0.5', '0', '0.0000001', '99999999', '30');

interface Declared {
  nRecords: string;
  ns: string | null;
  headerBytes: string | null;
  spr: string[];
  duration: string;
  plus: 'EDF+C' | 'EDF+D' | '';
  dataBytes: number;
  annotationSignal: boolean;
  /** BDF (24-bit) instead of EDF: version 0xFF "BIOSEMI", BDF+C/BDF+D/24BIT, 3-byte samples. */
  bdf?: boolean;
  /** Declare what the bytes really hold (record count, no ns/header-size override), so valid files occur too. */
  consistent?: boolean;
}

const declared: fc.Arbitrary<Declared> = fc.record({
  nRecords: recordCount,
  ns: fc.option(signalCount, { nil: null }),
  headerBytes: fc.option(fc.oneof(fc.constantFrom('99999999', '256', '0'), fc.integer({ min: 0, max: 99999999 }).map(String)), { nil: null }),
  spr: fc.array(samples, { minLength: 1, maxLength: 3 }),
  duration,
  plus: fc.constantFrom('EDF+C' as const, 'EDF+D' as const, '' as const),
  dataBytes: fc.integer({ min: 0, max: 3000 }),
  annotationSignal: fc.boolean(),
  bdf: fc.boolean(),
  consistent: fc.boolean(),
});

/** File bytes whose header declares `d` over `d.dataBytes` bytes of data (time-keeping TALs when there is an annotation signal). */
function hostileFile(declaredHeader: Declared): Uint8Array {
  let d = declaredHeader;
  // data: records of one sample per signal (the declared counts may say otherwise) and a 16-byte annotation signal
  // holding record r's time-keeping TAL "+r·duration" (EDF+ 2003 §2.2.4), repeated and cut to dataBytes
  const step = Number(d.duration) || 0;
  // samples per record as declared when small (so consistent files are valid), else 1
  const perSignal = d.spr.map((x) => (Number.isInteger(Number(x)) && Number(x) >= 1 && Number(x) <= 64 ? Number(x) : 1));
  const bps = d.bdf ? 3 : 2;
  const samples = d.bdf ? int24le : int16le;
  const records: Uint8Array[] = [];
  let whole = 0;
  for (let r = 0, n = 0; n < d.dataBytes; r++) {
    const rec = concat([
      ...perSignal.map((k) => samples(new Array<number>(k).fill(7))),
      ...(d.annotationSignal ? [talBytes(`+${+(r * step).toFixed(7)}\x14\x14\x00`, 8 * bps)] : []),
    ]);
    records.push(rec);
    n += rec.length;
    if (n <= d.dataBytes) whole = r + 1;
  }
  const data = concat(records).subarray(0, d.dataBytes);
  if (d.consistent) {
    d = { ...d, nRecords: String(whole), ns: null, headerBytes: null, spr: perSignal.map(String), duration: step > 0 ? d.duration : '1' };
  }
  const [dmin, dmax] = d.bdf ? ['-8388608', '8388607'] : ['-32768', '32767'];
  const signals: HandEdf['signals'] = d.spr.map((spr, i) => ({ label: `EEG C${i + 3}`, dim: 'uV', pmin: '-3200', pmax: '3200', dmin, dmax, spr }));
  if (d.annotationSignal) signals.push({ label: d.bdf ? 'BDF Annotations' : 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin, dmax, spr: '8' });
  return handEdf({
    patient: 'X X X X',
    recording: 'Startdate 01-JAN-2020 X X X',
    date: '01.01.20',
    time: '22.00.00',
    ...(d.bdf ? { version: BDF_VERSION } : {}),
    reserved: d.bdf ? (d.plus === '' ? '24BIT' : d.plus.replace('EDF', 'BDF')) : d.plus,
    nRecords: d.nRecords,
    duration: d.duration,
    signals,
    data,
    ...(d.ns !== null ? { ns: d.ns } : {}),
    ...(d.headerBytes !== null ? { headerBytes: d.headerBytes } : {}),
  });
}

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('alloc');
});
afterAll(() => tmp?.cleanup());

describe('allocation stays within the file whatever the header declares', () => {
  it('the wrapper sees the parser allocate (control: a valid file allocates its header buffer and onset tables)', async () => {
    const bytes = hostileFile({
      nRecords: '20',
      ns: null,
      headerBytes: null,
      spr: ['1', '1'],
      duration: '1',
      plus: 'EDF+C',
      dataBytes: 20 * 20,
      annotationSignal: true,
    });
    const file = path.join(tmp.dir, 'valid.edf');
    writeFileSync(file, bytes);
    const r = await recordAllocations(async () => {
      const f = await openEdf(file);
      await f.close();
      return f.header.nRecords;
    });
    expect(r.error).toBeUndefined();
    expect(r.value).toBe(20);
    expect(r.allocs.some((a) => a.kind === 'Uint8Array' && a.bytes === 256 + 256 * 3)).toBe(true); // the whole header, EDF 1992 §2.1
    expect(r.allocs.filter((a) => a.kind === 'Float64Array' && a.bytes === 8 * 20).length).toBeGreaterThanOrEqual(2); // onsets per record
    expect(overBound(r.allocs, bytes.length)).toBeNull();
    // and the bound can fail: a 4-MiB buffer for this small file would be caught
    expect(overBound([{ kind: 'Uint8Array', bytes: 4 * 2 ** 20 }], bytes.length)).not.toBeNull();
  });

  it('parseEdfHeader: 3,000 hostile declarations (in memory): a valid header or EdfFormatError, allocations within the file', async () => {
    let valid = 0;
    let validBdf = 0;
    let rejected = 0;
    let worst = 0;
    const reasons = new Map<string, number>();
    await fc.assert(
      fc.asyncProperty(declared, async (d) => {
        const bytes = hostileFile(d);
        const r = await recordAllocations(() => parseEdfHeader(bytes, 'fuzz.edf', bytes.length));
        if (r.error !== undefined) {
          expect(r.error).toBeInstanceOf(EdfFormatError);
          if (d.consistent) reasons.set((r.error as EdfFormatError).field, (reasons.get((r.error as EdfFormatError).field) ?? 0) + 1);
          rejected++;
        } else {
          const h = r.value!;
          // what was accepted is backed by the bytes (EDF 1992 §2.1–2.2)
          expect(h.headerBytes + h.nRecords * h.signals.reduce((a, s) => a + h.bytesPerSample * s.samplesPerRecord, 0)).toBeLessThanOrEqual(bytes.length);
          expect(h.variant.startsWith('BDF')).toBe(d.bdf === true);
          if (d.bdf) validBdf++;
          valid++;
        }
        expect(overBound(r.allocs, bytes.length), JSON.stringify(d)).toBeNull();
        for (const a of r.allocs) worst = Math.max(worst, a.bytes / bytes.length);
      }),
      { numRuns: 3000, seed: 8128 },
    );
    expect(valid).toBeGreaterThan(50);
    expect(validBdf).toBeGreaterThan(25); // BDF headers are exercised on the accepting side too
    expect(rejected).toBeGreaterThan(500);
    console.log(
      `header fuzz: ${valid} valid, ${rejected} rejected; largest allocation ${worst.toFixed(3)} × the file size; consistent declarations rejected for ${JSON.stringify(Object.fromEntries(reasons))}`,
    );
  }, 60_000);

  it('parseTals: 2,000 random and mutated annotation lists: TALs or EdfFormatError, allocations within the bytes', async () => {
    const talChar = fc.constantFrom(0x00, 0x14, 0x15, 0x2b, 0x2d, 0x2e, 0x30, 0x31, 0x39, 0x41, 0xc3, 0xa9, 0xff);
    const bytesArb = fc.oneof(
      fc.uint8Array({ minLength: 0, maxLength: 256 }),
      fc.array(talChar, { minLength: 0, maxLength: 256 }).map((a) => Uint8Array.from(a)),
      // a valid list with some bytes replaced (EDF+ 2003 §2.2.2 layout)
      fc.tuple(fc.array(fc.tuple(fc.nat(120), talChar), { maxLength: 6 })).map(([muts]) => {
        const b = talBytes('+30\x1530\x14Sleep stage 2\x14\x00+45.5\x14Arousal\x14\x00', 128);
        for (const [at, v] of muts) b[at] = v;
        return b;
      }),
    );
    let ok = 0;
    let rejected = 0;
    await fc.assert(
      fc.asyncProperty(bytesArb, async (bytes) => {
        const r = await recordAllocations(() => parseTals(bytes, 'fuzz.edf', 0, { index: 0, label: 'EDF Annotations' }));
        if (r.error !== undefined) {
          expect(r.error).toBeInstanceOf(EdfFormatError);
          rejected++;
        } else {
          for (const t of r.value!) expect(Number.isFinite(t.onsetS)).toBe(true);
          ok++;
        }
        expect(overBound(r.allocs, bytes.length)).toBeNull();
      }),
      { numRuns: 2000, seed: 4242 },
    );
    expect(ok).toBeGreaterThan(100);
    expect(rejected).toBeGreaterThan(100);
  }, 60_000);

  it('openEdf: 300 hostile files on disk: opened, or EdfFormatError, allocations within the file', async () => {
    let opened = 0;
    let rejected = 0;
    let worst = 0;
    let k = 0;
    await fc.assert(
      fc.asyncProperty(declared, async (d) => {
        const bytes = hostileFile(d);
        const file = path.join(tmp.dir, `h${k++ % 8}.edf`);
        writeFileSync(file, bytes);
        const r = await recordAllocations(async () => {
          const f = await openEdf(file);
          await f.close();
          return f;
        });
        if (r.error !== undefined) {
          expect(r.error instanceof EdfFormatError || r.error instanceof EdfIoError, String(r.error)).toBe(true);
          expect(r.error).not.toBeInstanceOf(EdfIoError); // the files exist and are readable: any failure is a format error
          rejected++;
        } else opened++;
        expect(overBound(r.allocs, bytes.length), JSON.stringify(d)).toBeNull();
        for (const a of r.allocs) worst = Math.max(worst, a.bytes / bytes.length);
      }),
      { numRuns: 300, seed: 31337 },
    );
    console.log(`openEdf fuzz: ${opened} opened, ${rejected} rejected; largest single allocation ${worst.toFixed(3)} × the file size`);
    expect(opened).toBeGreaterThan(5);
    expect(rejected).toBeGreaterThan(50);
  }, 60_000);

  it.each([
    ['99,999,999 records over 2 kB of data', { nRecords: '99999999', spr: ['1'] }],
    ['99,999,999 samples per record', { nRecords: '1', spr: ['99999999'] }],
    ['9,999 signals in a 1-kB file', { nRecords: '1', ns: '9999', spr: ['1'] }],
    ['header size 99,999,999', { nRecords: '1', headerBytes: '99999999', spr: ['1'] }],
    ['-1 records (derived from the size) with 1-sample records', { nRecords: '-1', spr: ['1'] }],
  ])('%s: refused or read without allocating in proportion to the declaration', async (_, over) => {
    const base: Declared = { nRecords: '1', ns: null, headerBytes: null, spr: ['1'], duration: '1', plus: 'EDF+C', dataBytes: 2000, annotationSignal: true };
    const d: Declared = { ...base, ...over };
    const bytes = hostileFile(d);
    const file = path.join(tmp.dir, 'extreme.edf');
    writeFileSync(file, bytes);
    const r = await recordAllocations(async () => {
      const f = await openEdf(file);
      await f.close();
      return f.header.nRecords;
    });
    if (r.error !== undefined) expect(r.error).toBeInstanceOf(EdfFormatError);
    else expect(r.value! * 2).toBeLessThanOrEqual(bytes.length);
    const largest = Math.max(...r.allocs.map((a) => a.bytes));
    expect(largest).toBeLessThanOrEqual(bytes.length);
    expect(overBound(r.allocs, bytes.length)).toBeNull();
  });
});
