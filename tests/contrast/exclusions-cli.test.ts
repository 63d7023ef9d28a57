// `bandwise compare --contrast` applies the exclusions the contrast JSON carries, and a TSV given
// with --exclusions joins them in the result's contrast, so the written result reruns as it ran
// (README "compare"; docs/design.md: the contrast JSON is one format for the dashboard and the
// command line). Fixture: tests/fixtures/make-fixture-db.ts (4 controls, 2 patients ingested).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeFixtureDb } from '../fixtures/make-fixture-db.ts';

// the command from its sources (bin/run-ts.mjs runs src/cli/main.ts through tsx)
const cli = [path.join(import.meta.dirname, '..', '..', 'bin', 'run-ts.mjs'), path.join(import.meta.dirname, '..', '..', 'src', 'cli', 'main.ts')];
let dir = '';
let db = '';

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'bw-exclusions-cli-'));
  db = path.join(dir, 'fixture.duckdb');
  await makeFixtureDb(db);
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Result {
  n: Record<string, number>;
  contrast: { exclusions: unknown[] };
  exclusions: { subject: string; channel: string | null; subjectStays?: boolean }[];
  statistics: { stat: (number | null)[] };
}

function run(name: string, contrast: object, extra: string[] = []): Result {
  const file = path.join(dir, `${name}.contrast.json`);
  writeFileSync(file, JSON.stringify(contrast));
  const out = path.join(dir, `${name}.json`);
  execFileSync(process.execPath, [...cli, 'compare', db, '--contrast', file, '--out', out, '--no-ledger', '--quiet', ...extra], { encoding: 'utf8' });
  return JSON.parse(readFileSync(out, 'utf8')) as Result;
}

const base = { design: 'groups', groups: ['control', 'patient'], stage: 'N2', fminHz: 2, fmaxHz: 12, permutations: 50, seed: 4 };
const LIST = [
  { subject: 'sub-02', reason: 'movement all night' },
  { subject: 'sub-03', channel: 'O1', reason: 'mains hum' },
];

describe('exclusions travel with the contrast JSON', () => {
  it('compare --contrast applies them; the same list as a TSV gives the identical result and contrast', () => {
    const carried = run('carried', { ...base, exclusions: LIST });
    // sub-02 out; sub-03 stays, its O1 missing
    expect(carried.n).toEqual({ control: 3, patient: 2 });
    expect(carried.contrast.exclusions).toEqual(LIST);
    expect(carried.exclusions.map((e) => [e.subject, e.channel, e.subjectStays ?? false])).toEqual([
      ['sub-02', null, false],
      ['sub-03', 'O1', true],
    ]);
    const tsv = path.join(dir, 'exclusions.tsv');
    writeFileSync(tsv, 'subject\tchannel\treason\nsub-02\tall\tmovement all night\nsub-03\tO1\tmains hum\n');
    const beside = run('beside', base, ['--exclusions', tsv]);
    expect(beside.n).toEqual(carried.n);
    expect(beside.contrast.exclusions).toEqual(LIST);
    expect(beside.statistics.stat).toEqual(carried.statistics.stat);
    // the result's contrast reruns as it ran
    const again = run('again', beside.contrast);
    expect(again.statistics.stat).toEqual(carried.statistics.stat);
  }, 240_000);
});
