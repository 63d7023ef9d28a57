// One file under two subjects (issue 15, finding 5). A recording is its file's content (SHA-256,
// FIPS 180-4; the digest checked against `sha256sum` of GNU coreutils): the same EDF listed in
// two rows, or a byte-identical copy under another name, must be refused for every row that
// shares it — in ingest_errors, naming all those rows — with the same outcome whatever the
// workers' timing (three runs with two workers each). A subject renamed in the table after a
// first ingest, whose file is stored under the old name, is reported, not silently skipped.
import { execFileSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { faultEdfBytes, STAGES_10 } from '../faults/fixture.ts';
import { withDb } from '../faults/helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-dup-'));
const at = (f: string) => path.join(dir, f);
const LABELS = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
const PARAMS = { references: ['recorded' as const], fit: null, minEpochs: 2 };

beforeAll(() => {
  for (let i = 1; i <= 4; i++) writeFileSync(at(`r${i}.edf`), faultEdfBytes({ labels: LABELS, seed: 700 + i, stages: STAGES_10 }));
  copyFileSync(at('r1.edf'), at('copy-of-r1.edf'));
  // row 1 and row 3 name the same file; row 5 a byte-identical copy of it
  const rows = ['a\tr1.edf', 'b\tr2.edf', 'c\tr1.edf', 'd\tr3.edf', 'e\tcopy-of-r1.edf', 'f\tr4.edf'];
  writeFileSync(at('cohort.tsv'), ['subject\trecording', ...rows].join('\n') + '\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('the same file in several rows', () => {
  it('is refused for every row sharing it, naming all of them, whatever the timing (3 runs, 2 workers)', async () => {
    const sha = execFileSync('sha256sum', [at('r1.edf')])
      .toString()
      .split(' ')[0];
    const outcomes: string[] = [];
    for (let k = 0; k < 3; k++) {
      const db = at(`dup-${k}.duckdb`);
      const s = await runIngest(at('cohort.tsv'), db, { jobs: 2, params: PARAMS });
      expect(s.done).toBe(3);
      expect(s.failed.map((f) => f.file).sort()).toEqual(['copy-of-r1.edf', 'r1.edf', 'r1.edf']);
      const stored = await withDb(db, (q) => q('SELECT subject, file_sha256 FROM recordings ORDER BY subject'));
      expect(stored.map((r) => r.subject)).toEqual(['b', 'd', 'f']);
      expect(stored.map((r) => r.file_sha256)).not.toContain(sha);
      const errors = await withDb(db, (q) => q('SELECT file, step, field, message FROM ingest_errors ORDER BY message, file'));
      expect(errors).toHaveLength(3);
      const all =
        `rows 1, 3 and 5 (subjects a, c and e) hold the same recording (files r1.edf, r1.edf and copy-of-r1.edf, SHA-256 ${sha.slice(0, 12)}…); ` +
        'it is refused for all of them: give each subject its own recording';
      expect(errors).toEqual([
        { file: 'r1.edf', step: 'cohort', field: 'recording', message: `row 1 (subject a): ${all}` },
        { file: 'r1.edf', step: 'cohort', field: 'recording', message: `row 3 (subject c): ${all}` },
        { file: 'copy-of-r1.edf', step: 'cohort', field: 'recording', message: `row 5 (subject e): ${all}` },
      ]);
      outcomes.push(JSON.stringify({ stored, errors }));
    }
    expect(new Set(outcomes).size).toBe(1);
  }, 120_000);
});

describe('a subject renamed in the table after a first ingest', () => {
  it('is reported with both names, not skipped in silence', async () => {
    const db = at('renamed.duckdb');
    writeFileSync(at('first.tsv'), 'subject\trecording\np1\tr2.edf\np2\tr3.edf\n');
    expect((await runIngest(at('first.tsv'), db, { jobs: 1, params: PARAMS })).done).toBe(2);
    writeFileSync(at('renamed.tsv'), 'subject\trecording\np1-new\tr2.edf\np2\tr3.edf\n');
    const s = await runIngest(at('renamed.tsv'), db, { jobs: 1, params: PARAMS });
    expect(s).toMatchObject({ done: 0, skipped: 1 });
    expect(s.failed).toEqual([
      {
        file: 'r2.edf',
        step: 'cohort',
        message: `row 1 (subject p1-new): this recording is stored in run ${s.runId} under subject p1; the table now names subject p1-new. Ingest into a new database file to store it under the new name`,
      },
    ]);
    expect(await withDb(db, (q) => q('SELECT subject FROM recordings ORDER BY subject'))).toEqual([{ subject: 'p1' }, { subject: 'p2' }]);
  }, 60_000);
});
