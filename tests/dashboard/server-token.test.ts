// The dashboard server serves only holders of its per-start access token, as curl would try it
// (issue 15, finding 1). Outside sources: RFC 6265 §4.1 (Set-Cookie attributes HttpOnly, Path),
// RFC 6265bis §4.1.2.7 (SameSite=Strict), RFC 9110 §15.4.3/§15.5.4 (302 with Location; 403) and
// §9.3.2 (HEAD), RFC 4648 §5 (base64url: 6 bits per character, for the token's strength).
import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startDashboardServer, type DashboardServer, type RequestLogEntry } from '../../src/server/serve.ts';

interface Reply {
  status: number;
  headers: http.IncomingHttpHeaders;
  body: Buffer;
}

/** One request with the path exactly as given (as curl sends it): no cookie jar, no redirects followed. */
function request(port: number, method: string, rawPath: string, headers: Record<string, string> = {}): Promise<Reply> {
  return new Promise((resolve, reject) => {
    const req = http.request({ host: '127.0.0.1', port, method, path: rawPath, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
    });
    req.on('error', reject);
    req.end();
  });
}

describe('dashboard server: access token', () => {
  let dir: string;
  let server: DashboardServer;
  let port: number;
  let token: string;
  const log: RequestLogEntry[] = [];
  const dbBytes = Buffer.from(Array.from({ length: 1000 }, (_, i) => (i * 7) % 256));

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-token-'));
    const app = path.join(dir, 'app');
    mkdirSync(path.join(app, 'assets'), { recursive: true });
    writeFileSync(path.join(app, 'index.html'), '<!doctype html><title>t</title>');
    writeFileSync(path.join(app, 'assets', 'main.js'), 'export {};');
    writeFileSync(path.join(dir, 'cohort.duckdb'), dbBytes);
    server = await startDashboardServer({ dbPath: path.join(dir, 'cohort.duckdb'), appDir: app, onRequest: (e) => log.push(e) });
    const url = new URL(server.url);
    port = Number(url.port);
    token = url.searchParams.get('token') ?? '';
  });

  afterAll(async () => {
    await server.close();
    rmSync(dir, { recursive: true, force: true });
  });

  const cookieName = () => `bandwise-${port}`;

  it('prints an address on 127.0.0.1 that carries a random token of at least 128 bits, new at every start', async () => {
    expect(server.url).toMatch(new RegExp(`^http://127\\.0\\.0\\.1:${port}/\\?token=[A-Za-z0-9_-]+$`));
    // base64url carries 6 bits per character (RFC 4648 §5): 22 characters hold 132 bits
    expect(token.length * 6).toBeGreaterThanOrEqual(128);
    const other = await startDashboardServer({ dbPath: path.join(dir, 'cohort.duckdb'), appDir: path.join(dir, 'app') });
    try {
      expect(new URL(other.url).searchParams.get('token')).not.toBe(token);
    } finally {
      await other.close();
    }
  });

  it('without the token or cookie: 403 and no body for the page, assets, the database, HEAD and ranges', async () => {
    const tries: [string, string, Record<string, string>][] = [
      ['GET', '/', {}],
      ['GET', '/index.html', {}],
      ['GET', '/assets/main.js', {}],
      ['GET', '/data/cohort.duckdb', {}],
      ['HEAD', '/data/cohort.duckdb', { Range: 'bytes=0-' }],
      ['GET', '/data/cohort.duckdb', { Range: 'bytes=0-99' }],
      ['GET', '/missing.html', {}],
      ['POST', '/data/cohort.duckdb', {}],
    ];
    for (const [method, p, headers] of tries) {
      const r = await request(port, method, p, headers);
      expect(r.status, `${method} ${p}`).toBe(403);
      expect(r.body.length, `${method} ${p}`).toBe(0);
      expect(r.headers['content-length'], `${method} ${p}`).toBe('0');
      expect(r.headers['set-cookie'], `${method} ${p}`).toBeUndefined();
    }
  });

  it('a wrong token or cookie gets the same 403 with no body', async () => {
    const wrongSameLength = token.slice(0, -1) + (token.endsWith('A') ? 'B' : 'A');
    for (const bad of [wrongSameLength, token.slice(0, 10), token + 'x', '', 'null']) {
      for (const p of ['/', '/data/cohort.duckdb']) {
        const byQuery = await request(port, 'GET', `${p}?token=${encodeURIComponent(bad)}`);
        expect(byQuery.status, `query ${bad} ${p}`).toBe(403);
        expect(byQuery.body.length).toBe(0);
        const byCookie = await request(port, 'GET', p, { Cookie: `${cookieName()}=${bad}` });
        expect(byCookie.status, `cookie ${bad} ${p}`).toBe(403);
        expect(byCookie.body.length).toBe(0);
      }
    }
    // the token of another server's cookie name does not open this one
    const otherName = await request(port, 'GET', '/data/cohort.duckdb', { Cookie: `bandwise-1=${token}` });
    expect(otherName.status).toBe(403);
  });

  it('the first page load exchanges the token for an HttpOnly, SameSite=Strict cookie and redirects to the address without it', async () => {
    const first = await request(port, 'GET', `/?token=${token}`);
    expect(first.status).toBe(302);
    expect(first.headers.location).toBe('/');
    expect(first.body.length).toBe(0);
    const cookie = first.headers['set-cookie']?.[0] ?? '';
    const attributes = cookie.split(';').map((s) => s.trim());
    expect(attributes[0]).toBe(`${cookieName()}=${token}`);
    expect(attributes).toContain('HttpOnly');
    expect(attributes).toContain('SameSite=Strict');
    expect(attributes).toContain('Path=/');
    // other query parameters stay
    const withMore = await request(port, 'GET', `/?view=1&token=${token}&b=2`);
    expect(withMore.status).toBe(302);
    expect(withMore.headers.location).toBe('/?view=1&b=2');
  });

  it('the cookie opens the page, the assets and the database (HEAD, whole and ranges)', async () => {
    const Cookie = `other=1; ${cookieName()}=${token}`;
    const page = await request(port, 'GET', '/', { Cookie });
    expect(page.status).toBe(200);
    expect(page.body.toString()).toContain('<title>t</title>');
    expect((await request(port, 'GET', '/assets/main.js', { Cookie })).body.toString()).toBe('export {};');
    const head = await request(port, 'HEAD', '/data/cohort.duckdb', { Cookie, Range: 'bytes=0-' });
    expect(head.status).toBe(206);
    expect(head.headers['content-length']).toBe('1000');
    const range = await request(port, 'GET', '/data/cohort.duckdb', { Cookie, Range: 'bytes=10-19' });
    expect(range.status).toBe(206);
    expect(range.body.equals(dbBytes.subarray(10, 20))).toBe(true);
    const whole = await request(port, 'GET', '/data/cohort.duckdb', { Cookie });
    expect(whole.body.equals(dbBytes)).toBe(true);
  });

  it('the token in the query opens a file directly (a script with the printed address)', async () => {
    const r = await request(port, 'GET', `/data/cohort.duckdb?token=${token}`, { Range: 'bytes=0-9' });
    expect(r.status).toBe(206);
    expect(r.body.equals(dbBytes.subarray(0, 10))).toBe(true);
  });

  it('keeps the Host check: the right cookie from a foreign Host name is refused', async () => {
    const r = await request(port, 'GET', '/data/cohort.duckdb', { Host: 'attacker.example', Cookie: `${cookieName()}=${token}` });
    expect(r.status).toBe(403);
  });

  it('never writes the token into the request log', () => {
    expect(log.length).toBeGreaterThan(20);
    for (const e of log) expect(JSON.stringify(e)).not.toContain(token);
    expect(log.some((e) => e.path.includes('token=[hidden]'))).toBe(true);
  });
});
