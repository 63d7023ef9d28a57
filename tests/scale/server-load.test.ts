// The dashboard server (src/server/serve.ts) under load and bad input, in its own process,
// on 127.0.0.1 only. Range semantics: RFC 9110 §14 (single byte ranges, 206/416); the request
// line and header syntax: RFC 9112 §2–3 (Node's HTTP parser answers 400 / 431 itself).
// Complements tests/dashboard/server.test.ts (traversal spellings, methods, Host check).
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import { networkInterfaces, tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { accessCookie } from '../helpers/dashboard-access.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-serve-'));
const repo = path.resolve(import.meta.dirname, '../..');
const SIZE = 8 * 2 ** 20; // an 8-MiB stand-in database file of random bytes
const data = randomBytes(SIZE);
const secret = 'outside-the-app-folder-7f3a';
let child: ChildProcess;
let url = new URL('http://127.0.0.1/');
let pid = 0;

/** The server process's resident set size in kB (Linux /proc/<pid>/status, VmRSS). */
function rssKb(): number {
  const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
  return Number(m![1]);
}

/** Send exact bytes on a fresh connection; resolve with everything the server answers until it closes or goes quiet. */
function raw(bytes: string | Buffer, quietMs = 1500): Promise<string> {
  return new Promise((resolve, reject) => {
    const s = net.connect(Number(url.port), '127.0.0.1');
    let got = '';
    let timer: NodeJS.Timeout;
    const done = () => {
      clearTimeout(timer);
      s.destroy();
      resolve(got);
    };
    const arm = () => {
      clearTimeout(timer);
      timer = setTimeout(done, quietMs);
    };
    s.on('data', (d) => {
      got += d.toString('latin1');
      arm();
    });
    s.on('end', done);
    s.on('error', (e) => (got ? done() : reject(e)));
    s.on('connect', () => {
      s.write(bytes);
      arm();
    });
  });
}

/** The Host line and the access cookie (tests/dashboard/server-token.test.ts checks the token itself). */
const host = () => `Host: 127.0.0.1:${url.port}\r\nCookie: ${accessCookie(url.href).Cookie}\r\n`;
const status = (text: string) => Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1] ?? 0);

beforeAll(async () => {
  const app = path.join(dir, 'app');
  mkdirSync(path.join(app, 'assets'), { recursive: true });
  writeFileSync(path.join(app, 'index.html'), '<!doctype html><title>t</title>');
  writeFileSync(path.join(dir, 'cohort.duckdb'), data);
  mkdirSync(path.join(dir, 'private'));
  writeFileSync(path.join(dir, 'private', 'secret.txt'), secret);
  symlinkSync(path.join(dir, 'private'), path.join(app, 'assets', 'linked-dir')); // a folder link out of the app
  symlinkSync(path.join(dir, 'private', 'secret.txt'), path.join(app, 'linked.txt')); // a file link out of it
  symlinkSync(path.join(dir, 'cohort.duckdb'), path.join(app, 'db-link.duckdb')); // the database, by a link from the app
  child = spawn(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'tests/scale/serve-child.ts'), path.join(dir, 'cohort.duckdb'), app], {
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  const line = await new Promise<string>((resolve, reject) => {
    let out = '';
    child.stdout!.on('data', (d) => {
      out += d;
      if (out.includes('\n')) resolve(out.split('\n')[0]);
    });
    child.once('exit', (code) => reject(new Error(`server exited ${code}`)));
  });
  const info = JSON.parse(line) as { url: string; pid: number };
  url = new URL(info.url);
  pid = info.pid;
}, 60_000);

afterAll(async () => {
  if (child && child.exitCode === null && child.pid !== undefined) {
    const exited = new Promise((r) => child.once('exit', r));
    process.kill(child.pid, 'SIGTERM');
    await exited;
  }
  rmSync(dir, { recursive: true, force: true });
});

describe('dashboard server under load', () => {
  it('answers 10,000 range requests from 20 concurrent keep-alive clients, every body right, RSS growth < 64 MB overall and < 24 MB in the second half', async () => {
    const agent = new http.Agent({ keepAlive: true, maxSockets: 20 });
    const get = (start: number, end: number) =>
      new Promise<{ status: number; body: Buffer }>((resolve, reject) => {
        const req = http.get(
          { host: '127.0.0.1', port: url.port, path: '/data/cohort.duckdb', agent, headers: { Range: `bytes=${start}-${end}`, ...accessCookie(url.href) } },
          (res) => {
            const parts: Buffer[] = [];
            res.on('data', (d: Buffer) => parts.push(d));
            res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(parts) }));
            res.on('error', reject);
          },
        );
        req.on('error', reject);
      });
    // warm-up (JIT, buffers), then the baseline
    for (let i = 0; i < 200; i++) await get(i * 4096, i * 4096 + 4095);
    const before = rssKb();
    let seed = 12345;
    const rand = () => (seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 2 ** 32; // LCG, enough for offsets
    // two rounds of 5,000: the first may grow the heap to its working size, the second must not grow it much more
    // (seen here: +28–34 MB in the first, +9–12 MB in the second, flat near 110 MB over 8 rounds of 5,000)
    const round = async (total: number) => {
      let next = 0;
      let bad = 0;
      let bytes = 0;
      await Promise.all(
        Array.from({ length: 20 }, async () => {
          while (next < total) {
            next++;
            const start = Math.floor(rand() * (SIZE - 1));
            const end = Math.min(SIZE - 1, start + Math.floor(rand() * 16384));
            const r = await get(start, end);
            if (r.status !== 206 || !r.body.equals(data.subarray(start, end + 1))) bad++;
            bytes += r.body.length;
          }
        }),
      );
      return { bad, bytes };
    };
    const mb = (kb: number) => Math.round(kb / 102.4) / 10;
    const t0 = performance.now();
    const first = await round(5000);
    const middle = rssKb();
    const second = await round(5000);
    const seconds = (performance.now() - t0) / 1000;
    const after = rssKb();
    agent.destroy();
    console.log(
      JSON.stringify({
        requests: 10_000,
        clients: 20,
        seconds: Math.round(seconds * 100) / 100,
        perS: Math.round(10_000 / seconds),
        mib: Math.round((first.bytes + second.bytes) / 2 ** 20),
        rssMB: [mb(before), mb(middle), mb(after)],
      }),
    );
    expect(first.bad + second.bad).toBe(0);
    expect(after - before).toBeLessThan(64 * 1024);
    expect(after - middle).toBeLessThan(24 * 1024);
  }, 180_000);

  it('refuses huge and malformed Range headers with 416, or 431 above the header size limit', async () => {
    const ask = async (range: string) => status(await raw(`GET /data/cohort.duckdb HTTP/1.1\r\n${host()}Range: ${range}\r\nConnection: close\r\n\r\n`));
    expect(await ask(`bytes=${'9'.repeat(400)}-`)).toBe(416); // a start past any size (not a safe integer)
    expect(await ask(`bytes=0-1${',0-1'.repeat(1000)}`)).toBe(416); // a thousand ranges
    expect(await ask('bytes=--5')).toBe(416);
    expect(await ask('bytes=0x10-0x20')).toBe(416);
    expect(await ask('bytes=1e3-2e3')).toBe(416);
    expect(await ask(`bytes=${SIZE}-`)).toBe(416);
    // a header block over Node's limit (16 KiB default, --max-http-header-size): 431 before any handler runs
    expect(await ask(`bytes=0-${'0'.repeat(20_000)}1`)).toBe(431);
    // a suffix longer than the file is the whole file (RFC 9110 §14.1.1: "the entire representation")
    const whole = await raw(`HEAD /data/cohort.duckdb HTTP/1.1\r\n${host()}Range: bytes=-${'9'.repeat(30)}\r\nConnection: close\r\n\r\n`);
    expect(status(whole)).toBe(206);
    expect(whole).toMatch(new RegExp(`Content-Range: bytes 0-${SIZE - 1}/${SIZE}`, 'i'));
  });

  it('refuses malformed requests (bad request line, header syntax, smuggling) with 400 and stays up', async () => {
    const bad = [
      'GARBAGE\r\n\r\n',
      `GET /index.html HTTP/9.9\r\n${host()}\r\n`,
      `GET /index.html HTTP/1.1\r\n${host()}No-colon-header\r\n\r\n`,
      `GET /index.html HTTP/1.1\r\n${host()}Bad Name: x\r\n\r\n`,
      `GET /index.html HTTP/1.1\r\n${host()}Content-Length: 5\r\nTransfer-Encoding: chunked\r\n\r\n0\r\n\r\n`,
      `GET /index.html HTTP/1.1\r\n${host()}Content-Length: 1\r\nContent-Length: 2\r\n\r\nab`,
      Buffer.from([0x00, 0x01, 0xff, 0xfe, 0x0d, 0x0a, 0x0d, 0x0a]),
    ];
    for (const b of bad) expect(status(await raw(b)), JSON.stringify(b.toString())).toBe(400);
    // still serving
    expect(status(await raw(`GET /index.html HTTP/1.1\r\n${host()}Connection: close\r\n\r\n`))).toBe(200);
  });

  it('refuses symlinks out of the folder, the database by another name, double-encoded and absolute paths', async () => {
    const paths = [
      '/linked.txt',
      '/assets/linked-dir/secret.txt',
      '/assets/linked-dir/',
      '/db-link.duckdb',
      '/%252e%252e/private/secret.txt',
      '/assets/%252e%252e%252f%252e%252e%252fprivate%252fsecret.txt',
      '/%25252e%25252e/private/secret.txt',
      `/${encodeURIComponent(path.join(dir, 'private', 'secret.txt'))}`,
      `//${dir.slice(1)}/private/secret.txt`,
      `/%2f${dir.slice(1)}/private/secret.txt`,
      '/data/%2e%2e/private/secret.txt',
    ];
    for (const p of paths) {
      const answer = await raw(`GET ${p} HTTP/1.1\r\n${host()}Connection: close\r\n\r\n`);
      expect([400, 404], p).toContain(status(answer));
      expect(answer, p).not.toContain(secret);
    }
  });

  it('listens on 127.0.0.1 only: another address of this machine refuses the connection', async () => {
    expect(url.hostname).toBe('127.0.0.1');
    const others = Object.values(networkInterfaces())
      .flat()
      .filter((a) => a && !a.internal)
      .map((a) => a!.address);
    for (const address of [...others, '::1']) {
      const result = await new Promise<string>((resolve) => {
        const s = net.connect({ host: address, port: Number(url.port) });
        s.on('connect', () => {
          s.destroy();
          resolve('connected');
        });
        s.on('error', (e: NodeJS.ErrnoException) => resolve(e.code ?? 'error'));
      });
      expect(result, address).not.toBe('connected');
    }
  });
});
