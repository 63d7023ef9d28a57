// Health-data rule (house rules; docs/design.md: EDF patient and recording identification is never
// stored, logged or shown), on the reading side. tests/scale/privacy.test.ts covers the database
// bytes, every table value and the ingest output; here a planted fake patient name, birth date,
// patient code, clinic and technician (EDF+ 2003 §2.1.3.3–4 subfields) must appear in nothing the
// dashboard server answers (the built app's every file, the database by HEAD, whole and range
// GETs, the error answers) and nothing `bandwise compare` and `bandwise report` write (result
// JSON, methods Markdown, report JSON, the ledger, their console output). bandwise has no Parquet
// export (no code writes Parquet), so there is none to check; the test asserts no .parquet file
// appears among the outputs.
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildDashboard } from '../e2e/harness.ts';
import { DATABASE_URL_PATH, startDashboardServer } from '../../src/server/serve.ts';
import { accessCookie } from '../helpers/dashboard-access.ts';
import { faultEdfBytes, STAGES_10 } from './fixture.ts';
import { run } from './helpers.ts';

// invented identities (no real person): patient "code sex birthdate name", recording "Startdate date admincode technician equipment"
const NAME = 'Thistlewood_Marigold';
const BIRTH = '17-OCT-1948';
const CODE = 'PID-ZK40772';
const CLINIC = 'Northbrook_Sleep_Unit';
const TECH = 'Tech_Pellow';
const PATIENT_ID = `${CODE} F ${BIRTH} ${NAME}`;
const RECORDING_ID = `Startdate 01-JAN-2020 ${CLINIC} ${TECH} Amp_R2`;
const SECRETS = [NAME, 'Thistlewood', 'Marigold', BIRTH, 'OCT-1948', CODE, 'ZK40772', CLINIC, 'Northbrook', TECH, 'Pellow'];

const dir = mkdtempSync(path.join(tmpdir(), 'bw-privacy-readers-'));
const at = (f: string) => path.join(dir, f);
const outputs: Record<string, string> = {};

/** Text forms a string could hide in: latin1 (UTF-8 ASCII too) and UTF-16LE. */
function clean(bytes: Buffer | string, where: string): void {
  const b = typeof bytes === 'string' ? Buffer.from(bytes, 'utf8') : bytes;
  for (const text of [b.toString('latin1'), b.toString('utf16le')]) {
    for (const s of SECRETS) expect(text.includes(s), `${where} contains '${s}'`).toBe(false);
  }
}

beforeAll(async () => {
  const rows: string[] = [];
  for (let i = 0; i < 6; i++) {
    writeFileSync(
      at(`p${i + 1}.edf`),
      faultEdfBytes({ labels: ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'], seed: 110 + i, patient: PATIENT_ID, recording: RECORDING_ID, stages: STAGES_10 }),
    );
    rows.push(`p${i + 1}\t${i % 2 ? 'patient' : 'control'}\tp${i + 1}.edf`);
  }
  writeFileSync(at('cohort.tsv'), ['subject\tgroup\trecording', ...rows].join('\n') + '\n');
  const steps: [string, string[]][] = [
    // 3 N2 epochs per recording: --min-epochs 2 keeps their spectra unflagged, so compare uses them
    [
      'ingest',
      ['ingest', at('cohort.tsv'), '--out', at('db.duckdb'), '--jobs', '1', '--no-fit', '--min-epochs', '2', '--reference', 'recorded,linked-mastoids'],
    ],
    [
      'compare',
      [
        'compare',
        at('db.duckdb'),
        '--groups',
        'control,patient',
        '--stage',
        'N2',
        '--permutations',
        '200',
        '--out',
        at('result.json'),
        '--tsv',
        at('clusters.tsv'),
        '--points-tsv',
        at('points.tsv'),
      ],
    ],
    ['report', ['report', at('result.json'), '--out', at('methods.md')]],
  ];
  for (const [name, args] of steps) {
    const r = await run(args);
    expect(r.code, `${name}: ${r.out}`).toBe(0);
    outputs[name] = r.out;
  }
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('planted EDF identification never reaches readers', () => {
  it('the recordings do hold the planted text (so the checks below can fail)', () => {
    const raw = readFileSync(at('p1.edf')).toString('latin1');
    expect(raw).toContain(PATIENT_ID);
    expect(raw).toContain(RECORDING_ID);
    expect(() => clean(readFileSync(at('p1.edf')), 'p1.edf')).toThrow(/contains 'Thistlewood_Marigold'/);
  });

  it('compare and report: result, cluster and point tables, methods text, report JSON, ledger and console output hold none of it', () => {
    const files = readdirSync(dir).filter((f) => !f.endsWith('.edf') && f !== 'cohort.tsv');
    // what the three commands wrote (the database, checked by tests/scale/privacy.test.ts, is scanned here too)
    for (const f of ['db.duckdb', 'result.json', 'clusters.tsv', 'points.tsv', 'methods.md', 'db.duckdb.ledger.jsonl']) expect(files).toContain(f);
    expect(files.some((f) => f.endsWith('.json') && f !== 'result.json')).toBe(true); // the report's JSON of parameters
    expect(files.filter((f) => /parquet/i.test(f))).toEqual([]); // no Parquet export exists
    for (const f of files) if (statSync(at(f)).isFile()) clean(readFileSync(at(f)), f);
    for (const [name, out] of Object.entries(outputs)) clean(out, `${name} output`);
    // the report is about this database: its facts are there, only the identities are not
    const md = readFileSync(at('methods.md'), 'utf8');
    expect(md).toMatch(/Welch/);
    expect(md).toMatch(/\b6\b/); // six recordings
  });

  it('the dashboard server: every app file, the database by HEAD, GET and range GET, and the error answers', async () => {
    const appDir = at('app');
    await buildDashboard(appDir); // the app as `npm run build` makes it, from the sources under test
    const server = await startDashboardServer({ dbPath: at('db.duckdb'), appDir });
    const seen: string[] = [];
    const fetchAll = async (p: string, init?: RequestInit) => {
      const res = await fetch(new URL(p, server.url), {
        ...init,
        headers: { ...(init?.headers as Record<string, string> | undefined), ...accessCookie(server.url) },
      });
      const body = Buffer.from(await res.arrayBuffer());
      clean(body, `${init?.method ?? 'GET'} ${p} body`);
      clean([...res.headers].map(([k, v]) => `${k}: ${v}`).join('\n'), `${p} headers`);
      seen.push(`${init?.method ?? 'GET'} ${p} ${res.status}`);
      return { res, body };
    };
    try {
      const walk = (d: string): string[] =>
        readdirSync(d).flatMap((f) => (statSync(path.join(d, f)).isDirectory() ? walk(path.join(d, f)) : [path.join(d, f)]));
      const appFiles = walk(appDir).map((f) => '/' + path.relative(appDir, f).split(path.sep).join('/'));
      expect(appFiles).toContain('/index.html');
      expect((await fetchAll('/')).res.status).toBe(200);
      for (const f of appFiles) expect((await fetchAll(f)).res.status, f).toBe(200);
      const db = readFileSync(at('db.duckdb'));
      expect((await fetchAll(DATABASE_URL_PATH, { method: 'HEAD', headers: { Range: 'bytes=0-' } })).res.status).toBe(206);
      const whole = await fetchAll(DATABASE_URL_PATH);
      expect(whole.body.equals(db)).toBe(true); // the served bytes are the database's
      expect((await fetchAll(DATABASE_URL_PATH, { headers: { Range: `bytes=4096-${Math.min(db.length, 300_000) - 1}` } })).res.status).toBe(206);
      for (const p of [`${DATABASE_URL_PATH}.wal`, '/p1.edf', '/../p1.edf', '/data/../../p1.edf', '/nothing-here'])
        expect((await fetchAll(p)).res.status, p).toBe(404);
      expect((await fetchAll('/', { method: 'POST' })).res.status).toBe(405);
    } finally {
      await server.close();
    }
    expect(seen.length).toBeGreaterThan(8);
    expect(existsSync(at('db.duckdb.wal'))).toBe(false);
  }, 180_000); // builds the app with Vite first
});
