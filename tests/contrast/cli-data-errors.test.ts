// A contrast the database cannot serve is one plain line and exit status 1, no stack trace
// (README "compare": 1 = the database or the data cannot serve it). Fixture:
// tests/fixtures/make-fixture-db.ts, which stores the recorded reference only.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeFixtureDb } from '../fixtures/make-fixture-db.ts';

// the command from its sources (bin/run-ts.mjs runs src/cli/main.ts through tsx)
const cli = [path.join(import.meta.dirname, '..', '..', 'bin', 'run-ts.mjs'), path.join(import.meta.dirname, '..', '..', 'src', 'cli', 'main.ts')];
let dir = '';
let db = '';

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'bw-data-errors-'));
  db = path.join(dir, 'fixture.duckdb');
  await makeFixtureDb(db);
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a reference that is not stored', () => {
  it.each(['compare', 'band-check'])('%s says so in one line, naming the stored references', (command) => {
    const extra = command === 'band-check' ? ['--band', 'sigma'] : [];
    const r = spawnSync(
      process.execPath,
      [...cli, command, db, '--groups', 'control,patient', '--reference', 'average', '--no-ledger', '--out', path.join(dir, 'out.json'), ...extra],
      { encoding: 'utf8' },
    );
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toBe(
      `bandwise ${command}: no N2 spectra with reference average, averaging mean and estimator welch in run run0000000000001; no stage has spectra of that reference and averaging (stored references: recorded)\n`,
    );
  });
});
