// An interrupted ingest (issue 15, finding 4): the real `bandwise ingest` in a child process gets
// a real SIGINT or SIGTERM once some recordings are committed. It must stop taking recordings,
// finish or roll back the write in progress, checkpoint (nothing left only in the write-ahead
// log), say what was stored and how to resume, and exit 128 + the signal number (130 for SIGINT,
// 143 for SIGTERM: the shell convention, POSIX "Exit Status for Commands"; signal numbers from
// signal(7)). On a terminal (a pseudo-terminal made by util-linux script(1), Ctrl-C typed as the
// byte 0x03 that the terminal turns into SIGINT, termios(3) ISIG) the cursor it hid is shown
// again (ECMA-48 / DEC private mode 25: ESC [ ? 25 l hides, ESC [ ? 25 h shows).
// Then the readers: compare, band-check, report and the dashboard use finished runs only; a run
// named with --run is analysed and the result and the methods text say it was unfinished.
//
// Size: 10 recordings × 30 min, 4 EEG channels at 128 Hz, with aperiodic fits, one worker: long
// enough (several seconds here) to be interrupted after the first commits.
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { faultEdfBytes, STAGES_10 } from './fixture.ts';
import { cli, perRecordingCounts, repo, run, withDb, type Ended } from './helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-interrupt-'));
const at = (f: string) => path.join(dir, f);
const N = 10;
const STAGES = Array.from({ length: 6 }, () => STAGES_10).flat(); // 60 epochs, 30 min
const ARGS = ['--jobs', '1', '--reference', 'recorded', '--min-epochs', '2'];
const QUICK = ['--groups', 'control,patient', '--stage', 'N2', '--permutations', '20', '--quiet', '--no-ledger'];
const STACK = /\n\s+at .*:\d+:\d+/;
let table = '';

beforeAll(() => {
  const rows: string[] = [];
  for (let i = 0; i < N; i++) {
    writeFileSync(at(`r${i + 1}.edf`), faultEdfBytes({ labels: ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'], seed: 500 + i, stages: STAGES }));
    rows.push(`r${String(i + 1).padStart(2, '0')}\t${i % 2 ? 'patient' : 'control'}\tr${i + 1}.edf\t${40 + i}`);
  }
  table = at('cohort.tsv');
  writeFileSync(table, ['subject\tgroup\trecording\tage', ...rows].join('\n') + '\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/**
 * Resolves once the database's write-ahead log has grown past `bytes` (it grows with every commit;
 * one recording here adds about 80–250 kB, measured: 200 kB is one or two, 600 kB three or more).
 */
async function committed(db: string, child: { exitCode: number | null }, bytes = 200_000): Promise<void> {
  for (;;) {
    if (child.exitCode !== null) throw new Error('the ingest ended before it could be interrupted');
    try {
      if (statSync(`${db}.wal`).size > bytes) return;
    } catch {
      // no log yet
    }
    await new Promise((r) => setTimeout(r, 20));
  }
}

const storedCount = (db: string) => withDb(db, async (q) => Number((await q('SELECT count(*)::INTEGER AS n FROM recordings'))[0].n));

async function interrupted(db: string, signal: 'SIGINT' | 'SIGTERM', bytes?: number): Promise<{ ended: Ended; runId: string; stored: number }> {
  const { child, ended } = cli(['ingest', table, '--out', db, ...ARGS]);
  await committed(db, child, bytes);
  child.kill(signal);
  const e = await ended;
  const m = /interrupted by (SIGINT|SIGTERM): run ([0-9a-f]{16}) is unfinished; (\d+) recordings? stored/.exec(e.out);
  expect(m, e.out).not.toBeNull();
  return { ended: e, runId: m![2], stored: Number(m![3]) };
}

describe('SIGINT and SIGTERM during an ingest', () => {
  let runId = '';
  let stored = 0;
  const db = at('int.duckdb');

  it('SIGINT: stops, checkpoints, says what was stored and how to resume, exits 130', async () => {
    // three or more stored: enough subjects for the named run's analysis below
    const r = await interrupted(db, 'SIGINT', 600_000);
    ({ runId, stored } = r);
    expect(r.ended.signal).toBeNull(); // it ended itself, not killed by the signal
    expect(r.ended.code, r.ended.out).toBe(130);
    expect(r.ended.out).not.toMatch(STACK);
    expect(r.ended.out).toMatch(/rerun the same command to resume: recordings already stored are skipped/);
    expect(stored).toBeGreaterThanOrEqual(1);
    expect(stored).toBeLessThan(N);
    // checkpointed: the data are in the file, the log is gone or empty
    expect(!existsSync(`${db}.wal`) || statSync(`${db}.wal`).size === 0).toBe(true);
    expect(await storedCount(db)).toBe(stored);
    const runs = await withDb(db, (q) => q('SELECT run_id, finished_at FROM runs'));
    expect(runs).toEqual([{ run_id: runId, finished_at: null }]);
    // nothing half-stored: every stored recording has all its rows
    for (const c of Object.values(await perRecordingCounts(db))) expect(c).toMatchObject({ n_epochs: 60, channels: 4, epochs: 60 });
  }, 120_000);

  it('compare, band-check and the dashboard refuse the unfinished run unless it is named', async () => {
    for (const [command, extra] of [
      ['compare', QUICK],
      ['band-check', [...QUICK, '--band', '11-16']],
    ] as const) {
      const r = await run([command, db, ...extra, '--out', at(`${command}.json`)]);
      expect(r.code, r.out).toBe(1);
      expect(r.out.trim()).toBe(
        `bandwise ${command}: the database holds no finished ingest run: run ${runId} stopped before its end. ` +
          `Rerun the same ingest to finish it, or name the run with --run ${runId} to analyse what it stored`,
      );
      expect(existsSync(at(`${command}.json`))).toBe(false);
    }
    const dash = await run(['dashboard', db]);
    expect(dash.code, dash.out).toBe(1);
    expect(dash.out).toMatch(/^bandwise dashboard: .* holds no finished ingest run: run [0-9a-f]{16} stopped before its end/);
  }, 120_000);

  it('named with --run, the unfinished run is analysed, and the result and the methods text say so', async () => {
    // a covariate design needs three subjects, whatever their groups
    const r = await run([
      'compare',
      db,
      '--design',
      'covariate',
      '--covariate',
      'age',
      '--stage',
      'N2',
      '--permutations',
      '20',
      '--quiet',
      '--no-ledger',
      '--run',
      runId,
      '--out',
      at('named.json'),
    ]);
    expect(r.code, r.out).toBe(0);
    expect(r.out).toContain(`run ${runId} is unfinished`);
    const result = JSON.parse(readFileSync(at('named.json'), 'utf8'));
    expect(result.database).toMatchObject({ runId, runFinished: false });
    const rep = await run(['report', at('named.json'), '--out', at('named.md'), '--json', at('named-parameters.json'), '--database', db, '--no-ledger']);
    expect(rep.code, rep.out).toBe(0);
    expect(readFileSync(at('named.md'), 'utf8')).toMatch(new RegExp(`ingest run ${runId} had not finished`));
    expect(JSON.parse(readFileSync(at('named-parameters.json'), 'utf8')).database.runFinished).toBe(false);
  }, 120_000);

  it('a rerun resumes: the stored recordings are skipped, the run finishes, and compare reads it', async () => {
    const r = await run(['ingest', table, '--out', db, ...ARGS]);
    expect(r.code, r.out).toBe(0);
    expect(r.out).toContain(`${N - stored} done, ${stored} already stored (skipped), 0 failed`);
    const c = await run(['compare', db, ...QUICK, '--out', at('after.json')]);
    expect(c.code, c.out).toBe(0);
    expect(JSON.parse(readFileSync(at('after.json'), 'utf8')).database.runFinished).toBe(true);
  }, 180_000);

  it('SIGTERM: the same, exit status 143', async () => {
    const r = await interrupted(at('term.duckdb'), 'SIGTERM');
    expect(r.ended.signal).toBeNull();
    expect(r.ended.code, r.ended.out).toBe(143);
    expect(r.ended.out).not.toMatch(STACK);
    expect(await storedCount(at('term.duckdb'))).toBe(r.stored);
    expect(!existsSync(at('term.duckdb.wal')) || statSync(at('term.duckdb.wal')).size === 0).toBe(true);
  }, 120_000);
});

describe('Ctrl-C on a terminal', () => {
  it('the progress bars hid the cursor; after Ctrl-C it is shown again, and the exit status is 130', async () => {
    const db = at('tty.duckdb');
    const command = [process.execPath, path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'tests/faults/cli-entry.ts'), 'ingest', table, '--out', db, ...ARGS]
      .map((a) => `'${a.replaceAll("'", "'\\''")}'`)
      .join(' ');
    // script(1) runs the command on a new pseudo-terminal: stdout is a TTY, so the bars are drawn; -e returns its exit status
    const child = spawn('script', ['-qefc', command, '/dev/null'], { stdio: ['pipe', 'pipe', 'pipe'] });
    let out = '';
    child.stdout.on('data', (d) => (out += d.toString('latin1')));
    child.stderr.on('data', (d) => (out += d.toString('latin1')));
    const ended = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
    await committed(db, child);
    child.stdin.write('\x03'); // Ctrl-C, typed
    const code = await ended;
    child.stdin.end();
    expect(code, out).toBe(130);
    const hidden = out.lastIndexOf('\x1b[?25l');
    expect(hidden, 'the bars hid the cursor').toBeGreaterThanOrEqual(0);
    expect(out.indexOf('\x1b[?25h', hidden), 'shown again after the last hide').toBeGreaterThan(hidden);
    expect(out).toMatch(/interrupted by SIGINT/);
  }, 120_000);
});

describe('a write-ahead log left by a killed writer', () => {
  it('the dashboard folds it into the file before serving (the browser reads the file only)', async () => {
    const db = at('int.duckdb'); // finished by the rerun above
    // a write whose data sit only in the log: checkpoints switched off, the engine closed without one
    const inst = await DuckDBInstance.create(db, { checkpoint_threshold: '1TB' });
    const c = await inst.connect();
    await c.run('PRAGMA disable_checkpoint_on_shutdown');
    await c.run(
      "INSERT INTO ingest_errors (run_id, file, step, field, message, logged_at) VALUES ('test', NULL, 'test', NULL, 'a row only in the log', now())",
    );
    c.closeSync();
    inst.closeSync();
    expect(statSync(`${db}.wal`).size).toBeGreaterThan(0);
    const { child, ended } = cli(['dashboard', db]);
    let out = '';
    child.stdout!.on('data', (d) => (out += d));
    while (!out.includes('dashboard on')) {
      if (child.exitCode !== null) break;
      await new Promise((r) => setTimeout(r, 50));
    }
    expect(out).toMatch(/write-ahead log .* folded into the file/);
    expect(!existsSync(`${db}.wal`) || statSync(`${db}.wal`).size === 0).toBe(true);
    child.kill('SIGTERM');
    await ended;
    expect(await withDb(db, (q) => q("SELECT message FROM ingest_errors WHERE step = 'test'"))).toEqual([{ message: 'a row only in the log' }]);
  }, 60_000);
});
