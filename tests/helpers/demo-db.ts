/**
 * The ingested demo database, built once and shared by every test file that needs it (the
 * dashboard end-to-end tests, the verdict and statistics checks on the demo). The recordings are
 * generated into demo-cohort/recordings/ (as `bandwise demo` does) and ingested with the default
 * parameters of `bandwise demo` (DEMO_INGEST_PARAMS) into tests/.tmp/demo-<stamp>.duckdb; a lock folder keeps parallel test files from
 * building it twice.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureDemoCohort, DEMO_INGEST_PARAMS, DEMO_RECORDINGS, DEMO_SCENARIO, scenarioStamp } from '../../src/simulation/index.ts';
import { runIngest } from '../../ingest/run.ts';
import { resolveIngestParams } from '../../ingest/pipeline.ts';
import type { IngestParams } from '../../ingest/pipeline/params.ts';
import { runIdentity } from '../../ingest/store/identity.ts';

const repo = fileURLToPath(new URL('../..', import.meta.url));
const tmp = path.join(repo, 'tests', '.tmp');

/** Hash of the code that writes the database (src/core, src/simulation and ingest), so a code change rebuilds it. */
function codeHash(): string {
  const h = createHash('sha256');
  const walk = (dir: string) => {
    for (const name of readdirSync(dir, { withFileTypes: true }).sort((a, b) => a.name.localeCompare(b.name))) {
      const p = path.join(dir, name.name);
      if (name.isDirectory()) walk(p);
      else if (/\.(ts|mjs)$/.test(name.name)) h.update(p.slice(repo.length)).update(readFileSync(p));
    }
  };
  walk(path.join(repo, 'src', 'core'));
  walk(path.join(repo, 'src', 'simulation'));
  walk(path.join(repo, 'ingest'));
  return h.digest('hex').slice(0, 8);
}

async function withLock<T>(name: string, fn: () => Promise<T>): Promise<T> {
  mkdirSync(tmp, { recursive: true });
  const lock = path.join(tmp, `${name}.lock`);
  const deadline = Date.now() + 20 * 60_000;
  for (;;) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      // a lock older than 20 minutes is left over from a killed run
      if (existsSync(lock) && Date.now() - statSync(lock).mtimeMs > 20 * 60_000) rmSync(lock, { recursive: true, force: true });
      if (Date.now() > deadline) throw new Error(`waited too long for ${lock}`);
      await new Promise((r) => setTimeout(r, 500));
    }
  }
  try {
    return await fn();
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

/**
 * The demo's participants table with only the first `perGroup` subjects of each group (in table
 * order), written beside it so the recording paths stay valid.
 */
function firstOfEachGroup(participantsPath: string, perGroup: number): string {
  const [header, ...rows] = readFileSync(participantsPath, 'utf8').trim().split('\n');
  const group = header.split('\t').indexOf('group');
  const taken = new Map<string, number>();
  const kept = rows.filter((r) => {
    const g = r.split('\t')[group];
    taken.set(g, (taken.get(g) ?? 0) + 1);
    return taken.get(g)! <= perGroup;
  });
  const out = path.join(path.dirname(participantsPath), `participants-first-${perGroup}.tsv`);
  writeFileSync(out, [header, ...kept].join('\n') + '\n');
  return out;
}

/**
 * Path of the ingested demo database (built on first use); `extra` ingest parameters (such as a
 * multitaper estimate) make a database of their own beside it, and `perGroup` one of the first
 * subjects of each group only (a smaller build for a check that needs fewer).
 */
export async function demoDatabase(extra: Partial<IngestParams> = {}, o: { perGroup?: number } = {}): Promise<string> {
  return withLock('demo', async () => {
    const cohort = await ensureDemoCohort();
    // keyed by the scenario, the ingest parameters and the code, so a change of any builds a new file
    const params = resolveIngestParams({ references: [...DEMO_INGEST_PARAMS.references], ...extra });
    const subset = o.perGroup === undefined ? '' : `-first${o.perGroup}`;
    const stamp = `${(await scenarioStamp(DEMO_SCENARIO)).slice(0, 8)}-${runIdentity(params).runId.slice(0, 8)}-${codeHash()}${subset}`;
    const db = path.join(tmp, `demo-${stamp}.duckdb`);
    const done = `${db}.done`;
    if (existsSync(db) && existsSync(done)) return db;
    const table = o.perGroup === undefined ? cohort.participantsPath : firstOfEachGroup(cohort.participantsPath, o.perGroup);
    // the ingest is resumable: a partial database from a killed run is completed, not rebuilt
    const summary = await runIngest(table, db, { jobs: 2, params });
    if (summary.failed.length > 0) throw new Error(`demo ingest failed: ${summary.failed.map((f) => `${f.file}: ${f.message}`).join('; ')}`);
    mkdirSync(done, { recursive: true });
    return db;
  });
}

/** The generated demo recordings (demo-cohort/recordings/, generated on first use under the same lock). */
export async function demoRecordings(): Promise<string> {
  return withLock('demo', async () => {
    await ensureDemoCohort();
    return DEMO_RECORDINGS;
  });
}

/** The demo's ground truth (what the generator planted). */
export function demoTruthPath(): string {
  return path.join(repo, 'demo-cohort', 'recordings', 'truth.json');
}
