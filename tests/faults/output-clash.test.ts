// Outputs never destroy inputs (issue 15, finding 3): the real commands in child processes, each
// given an output that is one of its inputs or another of its outputs — by the same name, another
// spelling, a symbolic link or a hard link (POSIX: one file, one device and inode; stat(2),
// link(2), symlink(7)). Each must exit 2 naming the file it would have destroyed, leave every
// file byte for byte as it was, and write nothing. Results are written through a temporary file
// renamed into place (rename(2) replaces the target atomically): a link keeps pointing at its
// file, the file keeps its permissions, and no temporary file is left behind.
import { createHash } from 'node:crypto';
import {
  chmodSync,
  existsSync,
  linkSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  lstatSync,
  rmSync,
  statSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analysisDatabase } from './analysis-cohort.ts';
import { run } from './helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-clash-'));
const at = (f: string) => path.join(dir, f);
let db = '';
let table = '';
const QUICK = ['--groups', 'control,patient', '--stage', 'N2', '--permutations', '20', '--quiet'];
const sha = (f: string) => createHash('sha256').update(readFileSync(f)).digest('hex');

beforeAll(async () => {
  ({ db, table } = await analysisDatabase(dir));
  const r = await run(['compare', db, ...QUICK, '--out', at('res.json')]);
  expect(r.code, r.out).toBe(0);
  writeFileSync(at('contrast.json'), JSON.stringify({ design: 'groups', groups: ['control', 'patient'], stage: 'N2' }));
  writeFileSync(at('exclusions.tsv'), 'subject\tchannel\treason\ns1\t\tnoisy\n');
  symlinkSync(db, at('db-link.duckdb'));
  linkSync(db, at('db-hard.duckdb'));
  mkdirSync(at('sub'));
}, 180_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Runs the command; expects exit 2, the one line, every protected file unchanged and `absent` not created. */
async function refused(args: string[], line: RegExp, protect: string[], absent: string[] = []): Promise<void> {
  const before = protect.map(sha);
  const ledger = existsSync(`${db}.ledger.jsonl`) ? sha(`${db}.ledger.jsonl`) : null;
  const r = await run(args);
  expect(r.code, r.out).toBe(2);
  expect(r.out.trim().split('\n'), r.out).toHaveLength(1);
  expect(r.out.trim()).toMatch(line);
  expect(protect.map(sha)).toEqual(before);
  for (const f of absent) expect(existsSync(f), f).toBe(false);
  expect(existsSync(`${db}.ledger.jsonl`) ? sha(`${db}.ledger.jsonl`) : null).toBe(ledger); // nothing recorded either
  expect(readdirSync(dir).filter((f) => f.endsWith('.partial'))).toEqual([]);
}

describe('an output that is an input is refused before any work (exit 2, nothing written)', () => {
  it('compare --out <the database>', async () => {
    await refused(
      ['compare', db, ...QUICK, '--out', db],
      /^bandwise compare: --out .*cohort\.duckdb is the database .*cohort\.duckdb \(the same file\): writing it would destroy that input; nothing written$/,
      [db],
    );
  });

  it('compare: the database by another spelling, a symbolic link and a hard link', async () => {
    await refused(['compare', db, ...QUICK, '--out', at('sub/../cohort.duckdb')], /--out .* is the database/, [db]);
    await refused(
      ['compare', db, ...QUICK, '--out', at('r1.json'), '--tsv', at('db-link.duckdb')],
      /^bandwise compare: --tsv .*db-link\.duckdb is the database .*cohort\.duckdb \(the same file\)/,
      [db],
      [at('r1.json')],
    );
    await refused(
      ['compare', db, ...QUICK, '--out', at('r2.json'), '--points-tsv', at('db-hard.duckdb')],
      /^bandwise compare: --points-tsv .*db-hard\.duckdb is the database/,
      [db],
      [at('r2.json')],
    );
  });

  it('compare: the contrast and exclusions files, and two outputs on one file', async () => {
    await refused(
      ['compare', db, '--contrast', at('contrast.json'), '--permutations', '20', '--out', at('contrast.json')],
      /^bandwise compare: --out .*contrast\.json is --contrast .*contrast\.json \(the same file\)/,
      [at('contrast.json')],
    );
    await refused(
      ['compare', db, ...QUICK, '--exclusions', at('exclusions.tsv'), '--out', at('r3.json'), '--tsv', at('exclusions.tsv')],
      /--tsv .*exclusions\.tsv is --exclusions/,
      [at('exclusions.tsv')],
      [at('r3.json')],
    );
    await refused(
      ['compare', db, ...QUICK, '--out', at('r4.json'), '--tsv', at('r4.json')],
      /^bandwise compare: --tsv .*r4\.json and --out .*r4\.json are the same file: one would overwrite the other; nothing written$/,
      [],
      [at('r4.json')],
    );
  });

  it('compare: the ledger (derived beside the database, or given) is an output too', async () => {
    writeFileSync(`${db}.ledger.jsonl`, '');
    await refused(
      ['compare', db, ...QUICK, '--out', `${db}.ledger.jsonl`],
      /--out .*cohort\.duckdb\.ledger\.jsonl and the ledger .*cohort\.duckdb\.ledger\.jsonl are the same file/,
      [`${db}.ledger.jsonl`],
    );
    await refused(
      ['compare', db, ...QUICK, '--out', at('r5.json'), '--ledger', db],
      /^bandwise compare: the ledger .*cohort\.duckdb is the database/,
      [db],
      [at('r5.json')],
    );
    rmSync(`${db}.ledger.jsonl`);
  });

  it('band-check --out <the database>', async () => {
    await refused(
      ['band-check', db, '--groups', 'control,patient', '--band', '11-16', '--permutations', '20', '--quiet', '--out', db],
      /^bandwise band-check: --out .* is the database/,
      [db],
    );
  });

  it('report res.json --out res.md: the parameters JSON beside it would be res.json', async () => {
    await refused(
      ['report', at('res.json'), '--out', at('res.md'), '--no-ledger'],
      /^bandwise report: the parameters JSON .*res\.json is the result .*res\.json \(the same file\): writing it would destroy that input; nothing written$/,
      [at('res.json')],
      [at('res.md')],
    );
    await refused(
      ['report', at('res.json'), '--out', at('m.md'), '--json', db, '--database', db, '--no-ledger'],
      /--json .* is the database/,
      [db],
      [at('m.md')],
    );
    await refused(
      ['report', at('res.json'), '--out', at('res.json'), '--json', at('p.json'), '--no-ledger'],
      /--out .*res\.json is the result/,
      [at('res.json')],
      [at('p.json')],
    );
  });

  it('ingest --out <the cohort table> or <one of its recordings>', async () => {
    await refused(
      ['ingest', table, '--out', table, '--jobs', '1'],
      /^bandwise ingest: --out .*cohort\.tsv is the cohort table .*cohort\.tsv \(the same file\)/,
      [table],
    );
    await refused(
      ['ingest', table, '--out', at('s3.edf'), '--jobs', '1'],
      /^bandwise ingest: --out .*s3\.edf is the recording of row 3 .*s3\.edf \(the same file\)/,
      [at('s3.edf')],
    );
  });
});

describe('the other commands that write files refuse the same way', () => {
  it('merge --out <a shard>, cluster-script writing over its cohort table, simulate writing over its scenario', async () => {
    await refused(
      ['merge', db, at('db-link.duckdb'), '--out', at('db-hard.duckdb')],
      /^bandwise merge: --out .*db-hard\.duckdb is the shard .*cohort\.duckdb \(the same file\)/,
      [db],
    );
    writeFileSync(at('sub/submit.sh'), 'subject\trecording\n');
    await refused(
      ['cluster-script', at('sub/submit.sh'), '--out', at('c.duckdb'), '--shards', '2', '--script-dir', at('sub')],
      /^bandwise cluster-script: the script .*submit\.sh is the cohort .*submit\.sh \(the same file\)/,
      [at('sub/submit.sh')],
    );
    writeFileSync(at('sub/truth.json'), '{}');
    await refused(
      ['simulate', at('sub/truth.json'), at('sub')],
      /^bandwise simulate: the output .*truth\.json is the scenario .*truth\.json \(the same file\)/,
      [at('sub/truth.json')],
    );
  });
});

describe('results are written through a temporary file renamed into place', () => {
  it('an existing result reached by a link: the file is replaced, the link kept, its permissions kept, nothing left over', async () => {
    writeFileSync(at('old.json'), 'old result');
    chmodSync(at('old.json'), 0o640);
    symlinkSync(at('old.json'), at('latest.json'));
    const r = await run(['compare', db, ...QUICK, '--no-ledger', '--out', at('latest.json')]);
    expect(r.code, r.out).toBe(0);
    expect(lstatSync(at('latest.json')).isSymbolicLink()).toBe(true);
    expect(JSON.parse(readFileSync(at('old.json'), 'utf8')).kind).toBe('compare');
    expect(statSync(at('old.json')).mode & 0o777).toBe(0o640);
    expect(readdirSync(dir).filter((f) => f.endsWith('.partial'))).toEqual([]);
  });
});
