import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readScoringTable } from '../../ingest/hypnogram/table.ts';
import { readScoringText } from '../../ingest/hypnogram/text.ts';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-hyp-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
function file(name: string, text: string): string {
  const p = path.join(dir, name);
  writeFileSync(p, text);
  return p;
}
/** Messages name a text that is not a stage label by the first 8 hex digits of its SHA-256 (node:crypto). */
const hash8 = (text: string) => `text #${createHash('sha256').update(text, 'utf8').digest('hex').slice(0, 8)}`;
async function scoringError(p: Promise<unknown>): Promise<ScoringError> {
  try {
    await p;
  } catch (e) {
    expect(e).toBeInstanceOf(ScoringError);
    return e as ScoringError;
  }
  throw new Error('expected a ScoringError');
}

describe('scoring tables (TSV/CSV)', () => {
  it('reads a TSV with case-insensitive headers; n/a stage rows are other events', async () => {
    const p = file('a.tsv', 'Onset\tDuration\tStage\tnote\n0\t60\tW\tn/a\n60\t30\tS1\tx\n90\t30\tn/a\tarousal\n90\t90\tN2\t\n');
    const h = await readScoringTable(p, { recordingDurationS: 180 });
    expect(h.stages).toEqual(['W', 'W', 'N1', 'N2', 'N2', 'N2']);
    expect(h.source).toBe('table:a.tsv');
    expect(h.warnings).toEqual([{ kind: 'ignored-events', epochs: [3], message: '1 row(s) with no stage (n/a) ignored at epoch 3 (90–120 s)' }]);
  });

  it('reads a CSV with quoted fields and a trial_type column mixing stages and events', async () => {
    const p = file(
      'b.csv',
      'onset,duration,trial_type\r\n0,30,"Sleep stage W"\r\n30,30,"Sleep stage 2"\r\n40,0.5,"Arousal, short"\r\n60,30,"Sleep stage ""R"""\r\n',
    );
    // '"Sleep stage ""R"""' unquotes to 'Sleep stage "R"', which looks like a stage label but is unknown.
    const e = await scoringError(readScoringTable(p));
    expect(e.message).toContain(`unknown stage label (${hash8('Sleep stage "R"')}, row 4) at epoch 2 (60–90 s)`);
    const ok = file('c.csv', 'onset,duration,trial_type\n0,30,"Sleep stage W"\n30,30,"Sleep stage 2"\n40,0.5,"Arousal, short"\n60,30,Sleep stage R\n');
    const h = await readScoringTable(ok);
    expect(h.stages).toEqual(['W', 'N2', 'R']);
    expect(h.warnings[0].message).toBe(`${hash8('Arousal, short')} (not a stage label): 1 event(s) ignored at epoch 1 (30–60 s), first at 40 s`);
  });

  it('accepts a description column and a missing duration as one epoch; sniffs the delimiter', async () => {
    const p = file('d.scoring', 'onset\tduration\tdescription\n0\tn/a\tN3\n30\tn/a\tR\n');
    expect((await readScoringTable(p)).stages).toEqual(['N3', 'R']);
  });

  it('a stage column is strict: a non-stage label is an error naming label, row and epoch', async () => {
    const p = file('e.tsv', 'onset\tduration\tstage\n0\t30\tW\n30\t30\tArousal\n');
    const e = await scoringError(readScoringTable(p));
    expect(e.epochs).toEqual([1]);
    expect(e.message).toContain(`unknown stage label (${hash8('Arousal')}, row 2) at epoch 1 (30–60 s)`);
    expect(e.message).not.toContain('Arousal');
  });

  it('names missing columns, bad numbers and ragged rows', async () => {
    expect((await scoringError(readScoringTable(file('f.tsv', 'onset\tlabel\n0\tW\n')))).message).toMatch(
      /no 'duration' column[\s\S]*no stage column: expected one of stage, trial_type, description/,
    );
    const bad = await scoringError(readScoringTable(file('g.tsv', 'onset\tduration\tstage\nabc\t30\tW\n30\tlong\tN2\n60\t30\n')));
    expect(bad.message).toContain("row 1, column 'onset': onset 'abc' is not a number of seconds");
    expect(bad.message).toContain("row 2, column 'duration': duration 'long' is not a number of seconds");
    expect(bad.message).toContain('row 3 (line 4) has 2 fields, the header has 3');
    expect((await scoringError(readScoringTable(path.join(dir, 'missing.tsv')))).message).toMatch(/missing\.tsv: [\s\S]*cannot read the scoring file: ENOENT/);
  });
});

describe('scoring text files (one label per epoch)', () => {
  it('maps older labels line by line', async () => {
    const h = await readScoringText(file('a.txt', 'W\nS1\nS2\r\nS3\nS4\nREM\nMT\n\n'), { recordingDurationS: 210 });
    expect(h.stages).toEqual(['W', 'N1', 'N2', 'N3', 'N3', 'R', 'unscored']);
    expect(h.warnings).toEqual([]);
    expect(h.source).toBe('text:a.txt');
  });

  it('a blank line inside the file is an error naming the line and epoch', async () => {
    const e = await scoringError(readScoringText(file('b.txt', 'W\n\nN2\n')));
    expect(e.message).toContain('empty stage label (line 2) at epoch 1 (30–60 s)');
  });

  it('past the end: whole epochs are errors, a partial last epoch is dropped with a warning', async () => {
    const seven = file('c.txt', 'W\nW\nN1\nN2\nN2\nN3\nR\n');
    const e = await scoringError(readScoringText(seven, { recordingDurationS: 150 }));
    expect(e.epochs).toEqual([5, 6]);
    expect(e.message).toContain("past the recording end (150 s) at epochs 5–6 (150–210 s): 'N3' (line 6), 'R' (line 7)");
    const six = file('d.txt', 'W\nW\nN1\nN2\nN2\nN3\n');
    const h = await readScoringText(six, { recordingDurationS: 165 });
    expect(h.stages).toEqual(['W', 'W', 'N1', 'N2', 'N2']);
    expect(h.warnings.map((w) => [w.kind, w.epochs])).toEqual([['truncated', [5]]]);
    const e7 = await scoringError(readScoringText(seven, { recordingDurationS: 165 }));
    expect(e7.epochs).toEqual([6]);
  });

  it('scoring that ends early leaves unscored epochs with a warning and a partial hypnogram; epoch length configurable', async () => {
    const h = await readScoringText(file('e.txt', 'N2\nN2\nR\n'), { recordingDurationS: 100, epochS: 20 });
    expect(h.epochS).toBe(20);
    expect(h.stages).toEqual(['N2', 'N2', 'R', 'unscored', 'unscored']);
    expect(h.warnings[0]).toEqual({
      kind: 'scoring-ends-early',
      epochs: [3, 4],
      message: 'scoring ends early: no scoring for epochs 3–4 (60–100 s) after the last scored epoch; set to unscored',
    });
    expect(h.partial).toBe(true);
  });
});

describe('readScoring picks the reader', () => {
  it('by extension, else by an onset column in the first line', async () => {
    expect((await readScoring(file('x.txt', 'N2\nR\n'))).source).toBe('text:x.txt');
    expect((await readScoring(file('x.csv', 'onset,duration,stage\n0,30,N2\n'))).source).toBe('table:x.csv');
    expect((await readScoring(file('x.hyp', '"Onset",Duration,Stage\n0,30,N2\n'))).source).toBe('table:x.hyp');
    const plain = await readScoring(file('y.hyp', 'W\nS2\n'));
    expect([plain.source, plain.stages]).toEqual(['text:y.hyp', ['W', 'N2']]);
  });
});
