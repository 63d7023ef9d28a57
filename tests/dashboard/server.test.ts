// The dashboard server answered with real HTTP requests. Expected behaviour is taken from
// RFC 9110 (HTTP Semantics): §9.3.2 HEAD, §14.1–14.4 Range / Content-Range, §15.5.6 405 with
// Allow, §15.5.17 416 with "Content-Range: bytes */size"; and from STACK.md (the HEAD
// "Range: bytes=0-" answer duckdb-wasm relies on, the .duckdb.wal probe that must get 404).
import { mkdtempSync, mkdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startDashboardServer, type DashboardServer, type RequestLogEntry } from '../../src/server/serve.ts';
import { servedDatabaseName } from '../../src/dashboard/db/served-name.ts';

interface Reply {
  status: number;
  headers: http.IncomingHttpHeaders;
  body: Buffer;
}

/** The access cookie of the server under test (tests/dashboard/server-token.test.ts checks the token itself). */
let cookie = '';

/** Send a request with the path exactly as given (no URL normalisation, unlike fetch), with the access cookie. */
function request(port: number, method: string, rawPath: string, headers: Record<string, string> = {}): Promise<Reply> {
  return new Promise((resolve, reject) => {
    const req = http.request({ host: '127.0.0.1', port, method, path: rawPath, headers: { Cookie: cookie, ...headers } }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
    });
    req.on('error', reject);
    req.end();
  });
}

function connects(host: string, port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host, port });
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
  });
}

describe('dashboard server', () => {
  let dir: string;
  let server: DashboardServer;
  let port: number;
  const log: RequestLogEntry[] = [];
  // 1000 bytes with a known pattern: byte i = i mod 251
  const dbBytes = Buffer.from(Array.from({ length: 1000 }, (_, i) => i % 251));
  const secret = 'outside the app folder';

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-serve-'));
    const app = path.join(dir, 'app');
    mkdirSync(path.join(app, 'assets'), { recursive: true });
    writeFileSync(path.join(app, 'index.html'), '<!doctype html><title>t</title>');
    writeFileSync(path.join(app, 'assets', 'engine.wasm'), Buffer.from([0, 0x61, 0x73, 0x6d]));
    writeFileSync(path.join(app, 'assets', 'main.js'), 'export {};');
    writeFileSync(path.join(dir, 'secret.txt'), secret);
    writeFileSync(path.join(dir, 'cohort.duckdb'), dbBytes);
    writeFileSync(path.join(dir, 'cohort.duckdb.wal'), 'wal');
    symlinkSync(path.join(dir, 'secret.txt'), path.join(app, 'assets', 'leak.txt'));
    symlinkSync('/etc', path.join(app, 'etc'));
    symlinkSync(path.join(app, 'assets', 'main.js'), path.join(app, 'alias.js'));
    server = await startDashboardServer({
      dbPath: path.join(dir, 'cohort.duckdb'),
      appDir: app,
      onRequest: (e) => log.push(e),
    });
    port = Number(new URL(server.url).port);
    cookie = `bandwise-${port}=${new URL(server.url).searchParams.get('token')}`;
  });

  afterAll(async () => {
    await server.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('listens on 127.0.0.1 only, at a free port', async () => {
    expect(server.url).toMatch(new RegExp(`^http://127\\.0\\.0\\.1:${port}/\\?token=`));
    expect(port).toBeGreaterThan(0);
    expect(await connects('127.0.0.1', port)).toBe(true);
    // Other addresses of this machine must not reach it: another loopback address, IPv6
    // loopback, and every non-internal interface address.
    const others = ['127.0.0.2', '::1'];
    for (const list of Object.values(os.networkInterfaces())) {
      for (const a of list ?? []) if (!a.internal && a.family === 'IPv4') others.push(a.address);
    }
    for (const host of others) expect(await connects(host, port), host).toBe(false);
  });

  it('serves the app with correct content types and security headers, no CORS', async () => {
    const index = await request(port, 'GET', '/');
    expect(index.status).toBe(200);
    expect(index.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(index.body.toString()).toContain('<title>t</title>');
    expect(index.headers['x-content-type-options']).toBe('nosniff');
    expect(index.headers['content-security-policy']).toContain("default-src 'self'");
    expect(index.headers['access-control-allow-origin']).toBeUndefined();
    const wasm = await request(port, 'GET', '/assets/engine.wasm');
    expect(wasm.status).toBe(200);
    expect(wasm.headers['content-type']).toBe('application/wasm');
    expect(wasm.body.equals(Buffer.from([0, 0x61, 0x73, 0x6d]))).toBe(true);
    const js = await request(port, 'GET', '/assets/main.js?v=1');
    expect(js.headers['content-type']).toBe('text/javascript; charset=utf-8');
    // hashed build assets may be cached; the page and the database are revalidated
    expect(js.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    expect(index.headers['cache-control']).toBe('no-cache');
    expect((await request(port, 'HEAD', '/data/cohort.duckdb')).headers['cache-control']).toBe('no-cache');
    // a symlink that stays inside the app folder is fine
    expect((await request(port, 'GET', '/alias.js')).body.toString()).toBe('export {};');
  });

  it('answers HEAD bytes=0- with 206 and the full length, no body (STACK.md)', async () => {
    const r = await request(port, 'HEAD', '/data/cohort.duckdb', { Range: 'bytes=0-' });
    expect(r.status).toBe(206);
    expect(r.headers['content-range']).toBe('bytes 0-999/1000');
    expect(r.headers['content-length']).toBe('1000');
    expect(r.headers['accept-ranges']).toBe('bytes');
    expect(r.body.length).toBe(0);
    const plain = await request(port, 'HEAD', '/data/cohort.duckdb');
    expect(plain.status).toBe(200);
    expect(plain.headers['content-length']).toBe('1000');
    expect(plain.body.length).toBe(0);
  });

  it('serves byte ranges with 206, Content-Range and Content-Length (RFC 9110 §14)', async () => {
    const mid = await request(port, 'GET', '/data/cohort.duckdb', { Range: 'bytes=100-355' });
    expect(mid.status).toBe(206);
    expect(mid.headers['content-range']).toBe('bytes 100-355/1000');
    expect(mid.headers['content-length']).toBe('256');
    expect(mid.body.equals(dbBytes.subarray(100, 356))).toBe(true);
    const one = await request(port, 'GET', '/data/cohort.duckdb', { Range: 'bytes=0-0' });
    expect(one.status).toBe(206);
    expect(one.body.equals(dbBytes.subarray(0, 1))).toBe(true);
    const suffix = await request(port, 'GET', '/data/cohort.duckdb', { Range: 'bytes=-10' });
    expect(suffix.headers['content-range']).toBe('bytes 990-999/1000');
    expect(suffix.body.equals(dbBytes.subarray(990))).toBe(true);
    const clipped = await request(port, 'GET', '/data/cohort.duckdb', { Range: 'bytes=900-5000' });
    expect(clipped.headers['content-range']).toBe('bytes 900-999/1000');
    expect(clipped.body.length).toBe(100);
    const whole = await request(port, 'GET', '/data/cohort.duckdb');
    expect(whole.status).toBe(200);
    expect(whole.body.equals(dbBytes)).toBe(true);
  });

  it('answers unsatisfiable, malformed and multi-range requests with 416', async () => {
    for (const range of ['bytes=1000-', 'bytes=500-100', 'bytes=0-1,5-9', 'items=0-1', 'bytes=-0', 'bytes=x-']) {
      const r = await request(port, 'GET', '/data/cohort.duckdb', { Range: range });
      expect(r.status, range).toBe(416);
      expect(r.headers['content-range'], range).toBe('bytes */1000');
    }
  });

  it('answers 404 to the WAL probe and anything else not served', async () => {
    for (const p of ['/data/cohort.duckdb.wal', '/data/', '/data', '/missing.html', '/assets/', '/assets']) {
      expect((await request(port, 'GET', p)).status, p).toBe(404);
    }
    expect((await request(port, 'HEAD', '/data/cohort.duckdb.wal')).status).toBe(404);
  });

  it('refuses path traversal in every spelling', async () => {
    const attempts = [
      '/../secret.txt',
      '/%2e%2e/secret.txt',
      '/%2E%2E%2Fsecret.txt',
      '/assets/%2e%2e/%2e%2e/secret.txt',
      '/%252e%252e/secret.txt',
      '/%252e%252e%252fsecret.txt',
      '/..%5csecret.txt',
      '/assets\\..\\..\\secret.txt',
      '/etc/passwd',
      '/%2fetc%2fpasswd',
      '//etc/passwd',
      '/etc/hostname',
      '/assets/leak.txt',
      '/index.html%00.js',
      '/%c0%ae%c0%ae/secret.txt',
      'http://127.0.0.1/../secret.txt',
      '/data/../../secret.txt',
    ];
    for (const p of attempts) {
      const r = await request(port, 'GET', p);
      expect([400, 403, 404], p).toContain(r.status);
      expect(r.body.toString(), p).not.toContain(secret);
      expect(r.body.toString(), p).not.toContain('root:');
    }
  });

  it('allows only GET and HEAD (405 with Allow)', async () => {
    for (const m of ['POST', 'PUT', 'DELETE', 'OPTIONS', 'PATCH']) {
      const r = await request(port, m, '/data/cohort.duckdb');
      expect(r.status, m).toBe(405);
      expect(r.headers.allow, m).toBe('GET, HEAD');
    }
  });

  it('refuses a foreign Host header (DNS rebinding)', async () => {
    const r = await request(port, 'GET', '/data/cohort.duckdb', { Host: 'attacker.example' });
    expect(r.status).toBe(403);
  });

  it('logs each request with its status', () => {
    const ranged = log.filter((e) => e.path === '/data/cohort.duckdb' && e.status === 206 && e.method === 'GET');
    expect(ranged.length).toBe(4);
    expect(ranged[0].bytes).toBe(256);
  });

  it('fails loudly on a missing database or app folder', async () => {
    await expect(startDashboardServer({ dbPath: path.join(dir, 'nope.duckdb'), appDir: dir })).rejects.toThrow(/dbPath is not a readable file/);
    await expect(startDashboardServer({ dbPath: path.join(dir, 'cohort.duckdb'), appDir: path.join(dir, 'nope') })).rejects.toThrow(/appDir is not a folder/);
    const dbPath = path.join(dir, 'cohort.duckdb');
    const appDir = path.join(dir, 'app');
    await expect(startDashboardServer({ dbPath, appDir, port: 70000 })).rejects.toThrow(/port must be an integer/);
    // the port given is taken (by the server under test): EADDRINUSE, no silent fallback
    await expect(startDashboardServer({ dbPath, appDir, port })).rejects.toThrow(/EADDRINUSE/);
  });
});

// The dashboard names the served database by its real file name (issue 23: the header showed
// "cohort.duckdb" for every file): the server sends it as Content-Disposition with an RFC 5987
// ext-value (RFC 6266 §4.1, §4.3: filename*=UTF-8''<percent-encoded>), and the app reads it back.
describe('the served database’s file name', () => {
  it('travels in Content-Disposition and is read back by the app', async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-serve-name-'));
    const name = 'night study – 2025 "a".duckdb';
    writeFileSync(path.join(dir, name), Buffer.alloc(10));
    mkdirSync(path.join(dir, 'app'));
    writeFileSync(path.join(dir, 'app', 'index.html'), '<!doctype html>');
    const s = await startDashboardServer({ dbPath: path.join(dir, name), appDir: path.join(dir, 'app') });
    try {
      const port = Number(new URL(s.url).port);
      // this server's own access cookie (the token its address carries)
      const r = await request(port, 'HEAD', '/data/cohort.duckdb', { Cookie: `bandwise-${port}=${new URL(s.url).searchParams.get('token')}` });
      expect(r.headers['content-disposition']).toBe("inline; filename*=UTF-8''night%20study%20%E2%80%93%202025%20%22a%22.duckdb");
      expect(servedDatabaseName(r.headers['content-disposition'] ?? null)).toBe(name);
      expect(servedDatabaseName(null)).toBeNull();
      expect(servedDatabaseName('inline')).toBeNull();
    } finally {
      await s.close();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
