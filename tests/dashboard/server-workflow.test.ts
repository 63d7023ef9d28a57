// The dashboard's write path for the workflow (issue 18: "the dashboard … offers the same steps"):
// POST /api/split, /api/lock, /api/confirm. First the HTTP rules with a stand-in handler, as curl
// or a page of another site would try them; then the three steps on a copy of the demo database,
// checked against what the commands' own functions store (tables subject_split, analysis_plans,
// plan_confirmations) and the one ledger beside the database.
// Outside sources: RFC 9110 §15.5.6 (405 with Allow), §15.5.14 (413), §15.5.16 (415), §15.5.4
// (403); the Fetch standard, "CORS-safelisted request-header": a cross-site form or simple request
// cannot send Content-Type application/json without a preflight, and this server answers none.
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/index.ts';
import { readConfirmations, readCurrentSplit, readPlans } from '../../src/analysis/split-store.ts';
import { startDashboardServer, type ApiHandler, type DashboardServer } from '../../src/server/serve.ts';
import { workflowApi } from '../../src/server/workflow-api.ts';
import { demoDatabase } from '../helpers/demo-db.ts';

interface Reply {
  status: number;
  headers: http.IncomingHttpHeaders;
  text: string;
}

function request(port: number, method: string, rawPath: string, headers: Record<string, string> = {}, body?: string | Buffer): Promise<Reply> {
  return new Promise((resolve, reject) => {
    const req = http.request({ host: '127.0.0.1', port, method, path: rawPath, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, text: Buffer.concat(chunks).toString('utf8') }));
    });
    req.on('error', (e: NodeJS.ErrnoException) =>
      e.code === 'ECONNRESET' || e.code === 'EPIPE' ? resolve({ status: 413, headers: {}, text: '' }) : reject(e),
    );
    req.end(body);
  });
}

async function serve(dir: string, dbPath: string, api?: ApiHandler): Promise<{ server: DashboardServer; port: number; token: string }> {
  const app = path.join(dir, 'app');
  mkdirSync(app, { recursive: true });
  writeFileSync(path.join(app, 'index.html'), '<!doctype html><title>t</title>');
  const server = await startDashboardServer({ dbPath, appDir: app, api });
  const url = new URL(server.url);
  return { server, port: Number(url.port), token: url.searchParams.get('token') ?? '' };
}

const JSON_TYPE = { 'Content-Type': 'application/json' };

describe('dashboard server: the write path of the workflow steps', () => {
  let dir: string;
  let s: Awaited<ReturnType<typeof serve>>;
  let readOnly: Awaited<ReturnType<typeof serve>>;
  const calls: { route: string; body: unknown }[] = [];

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-api-'));
    writeFileSync(path.join(dir, 'cohort.duckdb'), Buffer.alloc(100));
    s = await serve(dir, path.join(dir, 'cohort.duckdb'), async (route, body) => {
      calls.push({ route, body });
      return { status: 200, body: { echoed: route } };
    });
    readOnly = await serve(dir, path.join(dir, 'cohort.duckdb'));
  });

  afterAll(async () => {
    await s.server.close();
    await readOnly.server.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('takes a JSON body from a token holder of its own origin and answers JSON', async () => {
    const r = await request(s.port, 'POST', `/api/split?token=${s.token}`, { ...JSON_TYPE, Origin: `http://127.0.0.1:${s.port}` }, '{"fraction":0.5}');
    expect(r.status).toBe(200);
    expect(r.headers['content-type']).toBe('application/json; charset=utf-8');
    expect(JSON.parse(r.text)).toEqual({ echoed: 'split' });
    expect(calls).toEqual([{ route: 'split', body: { fraction: 0.5 } }]);
  });

  it('refuses without the token, from another origin, without a JSON content type, other methods, bad JSON and large bodies — the handler never called', async () => {
    calls.length = 0;
    const body = '{"fraction":0.5}';
    expect((await request(s.port, 'POST', '/api/split', JSON_TYPE, body)).status).toBe(403);
    expect((await request(s.port, 'POST', `/api/split?token=${s.token}`, { ...JSON_TYPE, Origin: 'http://evil.example' }, body)).status).toBe(403);
    expect((await request(s.port, 'POST', `/api/split?token=${s.token}`, { ...JSON_TYPE, Origin: 'null' }, body)).status).toBe(403);
    expect((await request(s.port, 'POST', `/api/split?token=${s.token}`, { 'Content-Type': 'text/plain' }, body)).status).toBe(415);
    expect((await request(s.port, 'POST', `/api/split?token=${s.token}`, { 'Content-Type': 'application/x-www-form-urlencoded' }, 'fraction=0.5')).status).toBe(
      415,
    );
    const get = await request(s.port, 'GET', `/api/split?token=${s.token}`);
    expect([get.status, get.headers.allow]).toEqual([405, 'POST']);
    const bad = await request(s.port, 'POST', `/api/split?token=${s.token}`, JSON_TYPE, '{fraction');
    expect([bad.status, JSON.parse(bad.text)]).toEqual([400, { error: 'the body is not JSON' }]);
    expect((await request(s.port, 'POST', `/api/split?token=${s.token}`, JSON_TYPE, Buffer.alloc((1 << 20) + 10, 32))).status).toBe(413);
    expect(calls).toEqual([]);
  });

  it('a dashboard started read-only answers 405 and says how to take the step', async () => {
    const r = await request(readOnly.port, 'POST', `/api/split?token=${readOnly.token}`, JSON_TYPE, '{}');
    expect(r.status).toBe(405);
    expect(JSON.parse(r.text).error).toContain('--read-only');
  });
});

describe('dashboard server: split, lock and confirm on a copy of the demo database', () => {
  let dir: string;
  let db: string;
  let s: Awaited<ReturnType<typeof serve>>;
  const post = (step: string, body: unknown) => request(s.port, 'POST', `/api/${step}?token=${s.token}`, JSON_TYPE, JSON.stringify(body));

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-api-demo-'));
    db = path.join(dir, 'cohort.duckdb');
    copyFileSync(await demoDatabase(), db);
    s = await serve(dir, db, workflowApi(db, `${db}.ledger.jsonl`));
  }, 1_200_000);

  afterAll(async () => {
    await s?.server.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it('bad input gets the one-line message of the command, no stack trace', async () => {
    const r = await post('split', { fraction: 2, seed: 1, stratify: ['group'] });
    expect(r.status).toBe(400);
    expect(JSON.parse(r.text).error).toMatch(/^fraction: /);
    const lock = await post('lock', { contrasts: [{ design: 'groups', groups: ['control', 'patient'], stage: 'N2' }] });
    expect(lock.status).toBe(409);
    expect(JSON.parse(lock.text).error).toContain('the database holds no split');
    expect(lock.text).not.toMatch(/\n\s+at /);
  });

  it('stores the split, the plan and its confirmation as the commands do, and records each in the ledger', async () => {
    const split = await post('split', { fraction: 0.5, seed: 7, stratify: ['group'], blindColumn: null });
    expect(split.status).toBe(200);
    const stamp = JSON.parse(split.text).split;
    // demo cohort: 18 controls and 18 patients; half of each stratum explores
    expect(stamp.subjects).toEqual({ exploration: 18, confirmation: 18 });
    const again = await post('split', { fraction: 0.5, seed: 8, stratify: ['group'] });
    expect(again.status).toBe(409);
    expect(JSON.parse(again.text).error).toContain('already');

    const contrast = {
      design: 'groups',
      groups: ['control', 'patient'],
      stage: 'N2',
      measure: 'log-psd',
      channels: ['C3', 'C4'],
      fmaxHz: 20,
      permutations: 100,
    };
    const lock = await post('lock', { contrasts: [contrast] });
    expect(lock.status).toBe(200);
    const plan = JSON.parse(lock.text).plan;
    expect(plan.id).toMatch(/^[0-9a-f]{12}$/);
    expect(plan.hash.startsWith(plan.id)).toBe(true);

    const confirm = await post('confirm', { plan: plan.id });
    expect(confirm.status).toBe(200);
    const [result] = JSON.parse(confirm.text).results;
    expect(result.part).toBe('confirmation');
    expect(result.plan).toMatchObject({ id: plan.id, hash: plan.hash, confirmationRun: 1 });
    expect(Object.values(result.n as Record<string, number>).reduce((a, b) => a + b, 0)).toBeLessThanOrEqual(18);

    const store = await openStore(db, { readOnly: true });
    try {
      expect((await readCurrentSplit(store))?.stamp.id).toBe(stamp.id);
      expect((await readPlans(store)).map((p) => p.id)).toEqual([plan.id]);
      expect((await readConfirmations(store)).map((c) => [c.planId, c.run])).toEqual([[plan.id, 1]]);
    } finally {
      await store.close();
    }
    const ledger = readFileSync(`${db}.ledger.jsonl`, 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(ledger.map((e) => [e.kind, e.planId ?? null, e.part ?? null])).toEqual([
      ['split', null, null],
      ['lock', null, null],
      ['compare', plan.id, 'confirmation'],
    ]);
  }, 600_000);
});
