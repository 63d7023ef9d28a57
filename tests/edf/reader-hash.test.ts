// openEdf(file, { sha256: true }) hashes the file while it reads the annotations (small records,
// read whole) or in a pass of its own (large records read in slices, plain EDF without an
// annotation signal, a header whose size field disagrees with its signal count). Each hash is
// checked against coreutils' sha256sum on the same file, the outside reference.
import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf } from '../../ingest/edf/reader.ts';
import { fileSha256 } from '../../ingest/file-sha256.ts';
import { concat, goodEdfPlusSpec, handEdf, int16le, makeTmpDir, talBytes } from './helpers.ts';

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('hash');
});
afterAll(() => tmp?.cleanup());

const sha256sum = (file: string) => execFileSync('sha256sum', [file], { encoding: 'utf8' }).split(' ')[0];

function save(name: string, bytes: Uint8Array): string {
  const file = join(tmp.dir, name);
  writeFileSync(file, bytes);
  return file;
}

async function hashOf(file: string): Promise<string | null> {
  const f = await openEdf(file, { sha256: true });
  await f.close();
  return f.sha256;
}

/** One 1-s record: an 8192-Hz signal (16 384 bytes, so the annotation pass reads slices) and a TAL. */
function bigRecordEdf(nRecords: number): Uint8Array {
  const records: Uint8Array[] = [];
  for (let r = 0; r < nRecords; r++) {
    records.push(int16le(Array.from({ length: 8192 }, (_, i) => ((i * 37 + r * 11) % 4001) - 2000)), talBytes(`+${r}\x14\x14\x00`, 30));
  }
  return handEdf({
    patient: 'X X X X',
    recording: 'Startdate X X X X',
    date: '01.01.20',
    time: '22.00.00',
    reserved: 'EDF+C',
    nRecords: String(nRecords),
    duration: '1',
    signals: [
      { label: 'EEG C3', dim: 'uV', pmin: '-200', pmax: '200', dmin: '-2048', dmax: '2047', spr: '8192' },
      { label: 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-32768', dmax: '32767', spr: '15' },
    ],
    data: concat(records),
  });
}

describe('SHA-256 of the file from openEdf, against sha256sum (coreutils)', () => {
  it('small records: hashed in the annotation pass', async () => {
    const file = save('small.edf', handEdf(goodEdfPlusSpec(40)));
    expect(await hashOf(file)).toBe(sha256sum(file));
  });

  it('small records with an incomplete last record after them (its bytes are in the hash too)', async () => {
    const spec = goodEdfPlusSpec(6);
    spec.nRecords = '7'; // 6 whole records + 5 bytes: the reader warns and ignores the incomplete one
    const file = save('tail.edf', concat([handEdf(spec), new Uint8Array([1, 2, 3, 4, 5])]));
    const f = await openEdf(file, { sha256: true });
    await f.close();
    expect(f.header.nRecords).toBe(6);
    expect(f.sha256).toBe(sha256sum(file));
  });

  it('records of 16 kB and more: annotation bytes read in slices, the hash in a pass of its own', async () => {
    const file = save('big.edf', bigRecordEdf(5));
    expect(await hashOf(file)).toBe(sha256sum(file));
  });

  it('plain EDF without an annotation signal', async () => {
    const spec = goodEdfPlusSpec(4);
    const plain = handEdf({
      ...spec,
      reserved: '',
      signals: spec.signals.slice(0, 2),
      data: concat(Array.from({ length: 4 }, (_, r) => concat([int16le([r, r + 1, r + 2, r + 3]), int16le([r, -r])]))),
    });
    const file = save('plain.edf', plain);
    expect(await hashOf(file)).toBe(sha256sum(file));
  });

  it('a file with no data records', async () => {
    const spec = goodEdfPlusSpec(0);
    const file = save('empty.edf', handEdf({ ...spec, data: new Uint8Array(0) }));
    expect(await hashOf(file)).toBe(sha256sum(file));
  });

  it('without the option there is no hash; fileSha256 agrees on a file that is not EDF', async () => {
    const file = save('small2.edf', handEdf(goodEdfPlusSpec(3)));
    const f = await openEdf(file);
    await f.close();
    expect(f.sha256).toBeNull();
    const text = save('notes.txt', new TextEncoder().encode('not an EDF file\n'.repeat(100_000)));
    expect(await fileSha256(text)).toBe(sha256sum(text));
  });
});
