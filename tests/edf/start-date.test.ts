// The recording start date: the header's dd.mm.yy with the EDF+ year rule (85–99 → 19yy, 00–84
// → 20yy), and in EDF+/BDF+ the "Startdate dd-MMM-yyyy" subfield of the local recording
// identification, which carries the 4-digit year (EDF+ 2003 §2.1.3.2–2.1.3.3: after 2084 the
// header's year is "yy" and only the subfield gives it). Files built byte by byte (helpers.ts).
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openEdf } from '../../ingest/edf/reader.ts';
import { goodEdfPlusSpec, handEdf, makeTmpDir, FAKE_HOSPITAL } from './helpers.ts';

let tmp: ReturnType<typeof makeTmpDir>;
beforeAll(() => {
  tmp = makeTmpDir('start-date');
});
afterAll(() => tmp?.cleanup());

async function start(name: string, date: string, recording: string, reserved = 'EDF+C') {
  const h = goodEdfPlusSpec();
  h.date = date;
  h.recording = recording;
  h.reserved = reserved;
  if (reserved === '') h.signals[2].label = 'Annotations x'; // plain EDF: an ordinary third signal
  const path = join(tmp.dir, `${name}.edf`);
  writeFileSync(path, handEdf(h));
  const f = await openEdf(path);
  await f.close();
  return { startDate: f.header.startDate, warnings: f.warnings.map((w) => `${w.field}: ${w.message}`) };
}

describe('start date', () => {
  it('EDF+: the Startdate subfield gives the century the two-digit year cannot (2103 written "03")', async () => {
    const s = await start('sd2103', '05.04.03', `Startdate 05-APR-2103 ${FAKE_HOSPITAL} tech01 amp7`);
    expect(s.startDate).toBe('2103-04-05T23:01:59');
    expect(s.warnings).toEqual([]);
  });

  it('EDF+: after 2084 the header year is the letters "yy" and the subfield gives the year', async () => {
    const s = await start('sdyy', '05.04.yy', `Startdate 05-APR-2091 ${FAKE_HOSPITAL} tech01 amp7`);
    expect(s.startDate).toBe('2091-04-05T23:01:59');
  });

  it('EDF+: a subfield that agrees changes nothing; "X" (unknown) leaves the header date', async () => {
    expect((await start('sdsame', '12.03.04', `Startdate 12-MAR-2004 ${FAKE_HOSPITAL} t a`)).startDate).toBe('2004-03-12T23:01:59');
    expect((await start('sdx', '12.03.98', `Startdate X ${FAKE_HOSPITAL} t a`)).startDate).toBe('1998-03-12T23:01:59');
  });

  it('EDF+: a subfield whose day, month or two-digit year disagrees is not used, with a warning that withholds it', async () => {
    const s = await start('sdother', '12.03.04', `Startdate 13-MAR-2004 ${FAKE_HOSPITAL} t a`);
    expect(s.startDate).toBe('2004-03-12T23:01:59');
    expect(s.warnings).toEqual([
      'local recording identification: its Startdate subfield disagrees with the header start date; the header date is used (content withheld)',
    ]);
    expect(s.warnings.join(' ')).not.toMatch(/13|MAR/);
  });

  it('plain EDF: the recording field is free text, never read for a date', async () => {
    expect((await start('plain', '05.04.03', 'Startdate 05-APR-2103 X X X', '')).startDate).toBe('2003-04-05T23:01:59');
  });

  it('"yy" without an EDF+ subfield to give the year is refused', async () => {
    await expect(start('yyplain', '05.04.yy', 'Startdate X X X X')).rejects.toThrow(/start date.*no year/);
  });
});
