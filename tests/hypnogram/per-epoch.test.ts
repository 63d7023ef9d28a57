// Per-epoch hypnograms as sleep labs export them (common practice; no standard body): one stage
// per epoch in a text file, with or without a header line, CRLF line ends, a UTF-8 byte-order
// mark, trailing empty lines; or a CSV/TSV with a stage column (and an epoch-number column) but
// no onset/duration columns. Numeric codes: 0–5 with R = 5 built in (the EDF+ hypnogram codes W,
// 1, 2, 3, 4, R = 0..5, Kemp & Olivan 2003); the R = 4 convention is said with a label map.
// S3 and S4 both become N3 (AASM, Iber et al. 2007). Expected stages written by hand.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import { readLabelMap } from '../../ingest/hypnogram/label-map.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-per-epoch-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
function file(name: string, text: string): string {
  const p = path.join(dir, name);
  writeFileSync(p, text);
  return p;
}

describe('per-epoch text files', () => {
  it('letters, CRLF, a byte-order mark and trailing empty lines', async () => {
    const h = await readScoring(file('a.txt', '\uFEFFW\r\nN1\r\nN2\r\nN3\r\nR\r\nREM\r\n\r\n\r\n'));
    expect(h.stages).toEqual(['W', 'N1', 'N2', 'N3', 'R', 'R']);
  });

  it('numeric codes 0–5 (R = 5, S4 merged into N3); the R = 4 convention through a label map', async () => {
    expect((await readScoring(file('b.txt', '0\n1\n2\n3\n4\n5\n'))).stages).toEqual(['W', 'N1', 'N2', 'N3', 'N3', 'R']);
    const map = readLabelMap(file('r4.tsv', 'label\tstage\n4\tR\n'));
    expect((await readScoring(file('c.txt', '0\n1\n2\n3\n4\n'), { labelMap: map })).stages).toEqual(['W', 'N1', 'N2', 'N3', 'R']);
  });

  it('a header line naming the column is skipped; epoch 0 is the first label after it', async () => {
    for (const head of ['Stage', 'sleep stage', 'Hypnogram', 'STAGES'])
      expect((await readScoring(file('d.txt', `${head}\r\nW\r\nN2\r\nN2\r\n`))).stages).toEqual(['W', 'N2', 'N2']);
  });

  it('any other first line is still a label: an unknown one is refused (it would shift every epoch if skipped)', async () => {
    await expect(readScoring(file('e.txt', 'Patient scoring\nW\nN2\n'))).rejects.toBeInstanceOf(ScoringError);
  });
});

describe('per-epoch tables (a stage column, no onset/duration)', () => {
  it('an epoch column counting from 1 and a stage column, CSV with CRLF and a byte-order mark', async () => {
    const h = await readScoring(file('f.csv', '\uFEFFEpoch,Stage\r\n1,W\r\n2,S1\r\n3,S2\r\n4,S3\r\n5,S4\r\n6,REM\r\n'));
    expect(h.stages).toEqual(['W', 'N1', 'N2', 'N3', 'N3', 'R']);
    expect(h.source).toBe('table:f.csv');
  });

  it('an epoch column counting from 0, TSV; a stage column alone; 20-s epochs', async () => {
    expect((await readScoring(file('g.tsv', 'epoch\tstage\n0\tW\n1\tN2\n2\tR\n'))).stages).toEqual(['W', 'N2', 'R']);
    const h = await readScoring(file('h.csv', 'stage\nW\nN2\nN2\n\n'), { epochS: 20, recordingDurationS: 80 });
    expect(h.epochS).toBe(20);
    expect(h.stages).toEqual(['W', 'N2', 'N2', 'unscored']);
  });

  it('epoch numbers that skip or repeat are refused naming the row, since every later epoch would move', async () => {
    const e = await readScoring(file('i.csv', 'epoch,stage\n1,W\n2,N2\n4,N2\n')).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(ScoringError);
    expect((e as Error).message).toContain("row 3, column 'epoch': epoch 4 is not the next epoch (3)");
  });
});

describe('semicolon-separated CSV (spreadsheets in locales with a decimal comma write it so; common practice)', () => {
  it('is told from the header line: a per-epoch table and an onset table', async () => {
    expect((await readScoring(file('j.csv', 'Epoch;Stage\r\n1;W\r\n2;N2\r\n3;"R"\r\n'))).stages).toEqual(['W', 'N2', 'R']);
    expect((await readScoring(file('k.csv', 'onset;duration;stage\n0;30;W\n30;60;N2\n'))).stages).toEqual(['W', 'N2', 'N2']);
  });

  it('a comma in the header keeps the comma as separator', async () => {
    expect((await readScoring(file('l.csv', 'onset,duration,stage\n0,30,W\n'))).stages).toEqual(['W']);
  });
});

describe('a decimal comma in a semicolon table', () => {
  it('is no number: refused naming the row, never misread', async () => {
    const e = await readScoring(file('m.csv', 'onset;duration;stage\n0;30;W\n30,5;30;N2\n')).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(ScoringError);
    expect((e as Error).message).toContain("row 2, column 'onset': onset '30,5' is not a number of seconds");
  });
});

describe('a per-epoch row without a stage (n/a or empty, the BIDS missing value)', () => {
  it('is an epoch without scoring: unscored, reported as a gap, the hypnogram partial', async () => {
    const h = await readScoring(file('n.csv', 'epoch,stage\n1,W\n2,n/a\n3,\n4,N2\n'));
    expect(h.stages).toEqual(['W', 'unscored', 'unscored', 'N2']);
    expect(h.warnings.map((w) => [w.kind, w.epochs])).toEqual([['gap', [1, 2]]]);
    expect(h.partial).toBe(true);
  });
});
