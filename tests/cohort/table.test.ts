import { rmSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readCohortTable } from '../../ingest/cohort/table.ts';
import { discoverCohort } from '../../ingest/cohort/discover.ts';
import { cohortError, tempFolder } from './fixtures.ts';

// The cohort-table columns are fixed in docs/design.md ("The cohort table"); missing values
// are 'n/a' or empty as in BIDS tabular files (BIDS specification, common principles).

const { dir, put } = tempFolder('bw-cohort-table-');
afterAll(() => rmSync(dir, { recursive: true, force: true }));
for (const f of ['edf/a1.edf', 'edf/a2.edf', 'edf/b1.edf', 'c1.edf', 'score/a1.tsv', 'score/b1.txt']) put(f, 'x');

describe('readCohortTable', () => {
  it('reads a TSV: paths relative to the table, typed covariates, one participant per subject', async () => {
    const table = put(
      'cohort.tsv',
      [
        'Subject\tsession\tgroup\trecording\tscoring\tage\tsex\tpsqi',
        'A01\t1\tcontrol\tedf/a1.edf\tscore/a1.tsv\t34\tF\t3.5',
        'A01\t2\tcontrol\tedf/a2.edf\tn/a\t34\tF\t4',
        'B07\tn/a\tpatient\tedf/b1.edf\tscore/b1.txt\tn/a\tM\t-1e1',
        'C02\t\tpatient\tc1.edf\t\t51\tn/a\t',
      ].join('\n') + '\n',
    );
    const c = await readCohortTable(table);
    expect(c.source).toBe('table');
    expect(c.root).toBe(dir);
    expect(c.columns).toEqual([
      { name: 'subject', kind: 'string' },
      { name: 'group', kind: 'string' },
      { name: 'age', kind: 'number' },
      { name: 'sex', kind: 'string' },
      { name: 'psqi', kind: 'number' },
    ]);
    expect(c.recordings.map((r) => [r.row, r.subject, r.session, r.group])).toEqual([
      [1, 'A01', '1', 'control'],
      [2, 'A01', '2', 'control'],
      [3, 'B07', null, 'patient'],
      [4, 'C02', null, 'patient'],
    ]);
    expect(c.recordings[0].recordingPath).toBe(path.join(dir, 'edf', 'a1.edf'));
    expect(c.recordings[0].scoringPath).toBe(path.join(dir, 'score', 'a1.tsv'));
    expect(c.recordings[1].scoringPath).toBeNull();
    expect(c.recordings[2].covariates).toEqual({ age: null, sex: 'M', psqi: -10 });
    expect(c.recordings[3].covariates).toEqual({ age: 51, sex: null, psqi: null });
    expect(c.participants).toEqual([
      { subject: 'A01', group: 'control', age: 34, sex: 'F', psqi: 3.5 },
      { subject: 'B07', group: 'patient', age: null, sex: 'M', psqi: -10 },
      { subject: 'C02', group: 'patient', age: 51, sex: null, psqi: null },
    ]);
  });

  it('reads a CSV with quoted fields, no optional columns; subject codes stay text; delimiter sniffed', async () => {
    const text = 'subject,recording,note,score\n001,"edf/a1.edf","slept badly, woke at 3",12\n"002","c1.edf","said ""fine""",n/a\n';
    for (const name of ['cohort.csv', 'cohort.list']) {
      const c = await readCohortTable(put(name, text));
      expect(c.columns).toEqual([
        { name: 'subject', kind: 'string' },
        { name: 'note', kind: 'string' },
        { name: 'score', kind: 'number' },
      ]);
      expect(c.recordings.map((r) => [r.subject, r.session, r.group, r.scoringPath])).toEqual([
        ['001', null, null, null],
        ['002', null, null, null],
      ]);
      expect(c.recordings[0].covariates).toEqual({ note: 'slept badly, woke at 3', score: 12 });
      expect(c.recordings[1].covariates.note).toBe('said "fine"');
    }
    expect((await discoverCohort(path.join(dir, 'cohort.csv'))).recordings).toHaveLength(2);
  });

  it('reports every problem together with its row and column', async () => {
    const table = put(
      'bad.tsv',
      [
        'subject\tsession\tgroup\trecording\tscoring',
        'A01\t1\tcontrol\tedf/a1.edf\tn/a', // row 1 fine
        'A02\t1\tcontrol\tedf/nope.edf\tn/a', // row 2: recording missing
        'A03\t1\tcontrol\tedf/a2.edf\tscore/nope.tsv', // row 3: scoring missing
        'A01\t1\tcontrol\tedf/b1.edf\tn/a', // row 4: duplicate of row 1
        '\t1\tcontrol\tc1.edf\tn/a', // row 5: empty subject
        'A05\t1\tn/a\tc1.edf\tn/a', // row 6: empty group
        'A06\t1\tcontrol\tc1.edf', // row 7: ragged
        'A01\t2\tpatient\tc1.edf\tn/a', // row 8: A01 in two groups
        'A08\t1\tpatient\t\tn/a', // row 9: empty recording
      ].join('\n'),
    );
    const e = await cohortError(readCohortTable(table));
    expect(e.file).toBe(table);
    const find = (row: number) => e.problems.filter((p) => p.row === row).map((p) => `${p.column}: ${p.message}`);
    expect(find(1)).toEqual([]);
    expect(find(2)).toEqual([`recording: recording file not found: 'edf/nope.edf' (${path.join(dir, 'edf', 'nope.edf')})`]);
    expect(find(3)).toEqual([`scoring: scoring file not found: 'score/nope.tsv' (${path.join(dir, 'score', 'nope.tsv')})`]);
    expect(find(4)).toEqual(["subject: subject 'A01' session '1' is already in row 1"]);
    expect(find(5)).toEqual(['subject: subject is empty']);
    expect(find(6)).toEqual(['group: group is empty (the table has a group column, so every row needs one)']);
    expect(find(7)).toEqual(['null: has 4 fields, the header has 5 (line 8)']);
    expect(find(8)).toEqual(["group: subject 'A01' is in group 'patient' here but in group 'control' in row 1"]);
    expect(find(9)).toEqual(['recording: recording path is empty']);
    expect(e.message).toContain("row 4, column 'subject': subject 'A01' session '1' is already in row 1");
    expect(e.message).toMatch(/^.*bad\.tsv: 8 cohort problems:/);
  });

  it('names missing required columns, duplicate header names and unreadable files', async () => {
    const e = await cohortError(readCohortTable(put('nocols.tsv', 'Subject\tgroup\tage\tage\nA01\tcontrol\t3\t4\n')));
    expect(e.problems).toEqual([
      { row: null, column: 'age', message: "column 'age' appears twice in the header" },
      { row: null, column: 'recording', message: "required column 'recording' is missing (header: Subject, group, age, age)" },
    ]);
    const empty = await cohortError(readCohortTable(put('empty.tsv', 'subject\trecording\n')));
    expect(empty.message).toContain('the table has no data rows');
    const missing = await cohortError(readCohortTable(path.join(dir, 'none.tsv')));
    expect(missing.message).toContain('cannot read the cohort table: ENOENT');
    const quote = await cohortError(readCohortTable(put('q.csv', 'subject,recording\n"A01,c1.edf\n')));
    expect(quote.message).toContain('line 2: quoted field is not closed');
    const nothing = await cohortError(discoverCohort(path.join(dir, 'nowhere')));
    expect(nothing.message).toContain('no cohort table or BIDS folder here: ENOENT');
  });

  it('reads lights_off / lights_on per recording as clock times or seconds from the recording start (our convention, README)', async () => {
    const table = put(
      'lights.tsv',
      ['subject	recording	Lights_Off	lights_on	age', 'A01	edf/a1.edf	22:47	06:30:15	30', 'A02	edf/a2.edf	900	n/a	31', 'B07	edf/b1.edf		28800.5	32'].join('\n'),
    );
    const c = await readCohortTable(table);
    // per recording, not participant covariates
    expect(c.columns.map((x) => x.name)).toEqual(['subject', 'age']);
    expect(c.recordings.map((r) => r.lights)).toEqual([
      { off: { clockS: 22 * 3600 + 47 * 60 }, on: { clockS: 6 * 3600 + 30 * 60 + 15 } },
      { off: { fromStartS: 900 }, on: null },
      { off: null, on: { fromStartS: 28800.5 } },
    ]);
    const bad = await cohortError(readCohortTable(put('lights-bad.tsv', 'subject\trecording\tlights_off\tlights_on\nA01\tedf/a1.edf\t25:00\t-3\n')));
    expect(bad.problems).toEqual([
      { row: 1, column: 'lights_off', message: "'25:00' is neither a clock time (HH:MM or HH:MM:SS, 24-hour) nor seconds (≥ 0) from the recording start" },
      { row: 1, column: 'lights_on', message: "'-3' is neither a clock time (HH:MM or HH:MM:SS, 24-hour) nor seconds (≥ 0) from the recording start" },
    ]);
    // with per-recording problems, the row is kept with its problem (ingest records it and goes on)
    const kept = await readCohortTable(put('lights-bad2.tsv', 'subject\trecording\tlights_off\nA01\tedf/a1.edf\tlate\nA02\tedf/a2.edf\t22:00\n'), {
      rowProblems: 'per-recording',
    });
    expect(kept.recordings.map((r) => r.problem?.column ?? null)).toEqual(['lights_off', null]);
  });
});
