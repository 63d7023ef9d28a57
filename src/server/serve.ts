// Local server for the dashboard: the built app files and one database file, on 127.0.0.1 only,
// to holders of a per-start access token (access-token.ts) and nobody else: a request without the
// token or its cookie gets 403 with no body, whatever it asks for. Implements HEAD and single byte
// ranges itself (duckdb-wasm reads the database with range requests; see STACK.md). Anything not
// served answers 404, other methods 405. With a handler for the workflow's steps (workflow-api.ts),
// POST /api/<step> takes a JSON body from the app's own page only (its Origin, when sent, must be
// this server's; Content-Type application/json, which a form on another site cannot send without
// asking first; at most 1 MiB) and answers JSON. The database's ledger is read and appended to at LEDGER_URL_PATH, under the
// same origin rule for appending.
import { createReadStream } from 'node:fs';
import { realpath, stat } from 'node:fs/promises';
import http from 'node:http';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { cookieValues, cookieName, isToken, newToken, tokenCookie, tokenParameters, withoutTokenParameter, withoutTokenValue } from './access-token.ts';
import { ledgerRoute } from './ledger-route.ts';
import { parseRange } from './range.ts';
import { requestSegments, resolveInside } from './safe-path.ts';

/** The one URL path under which the database file is served. */
export const DATABASE_URL_PATH = '/data/cohort.duckdb';
/** The ledger beside the database: GET reads it (JSON lines), POST appends one analysis (ledger-route.ts). */
export const LEDGER_URL_PATH = '/data/ledger.jsonl';

export interface RequestLogEntry {
  method: string;
  /** The request target, the access token's value replaced by [hidden]. */
  path: string;
  status: number;
  /** Bytes of body sent (0 for HEAD and errors). */
  bytes: number;
  /** The Range header as received, if any. */
  range?: string;
}

/** The answer of a write step: an HTTP status and a JSON body. */
export interface ApiAnswer {
  status: number;
  body: unknown;
}

/** Answers POST /api/<route> with its parsed JSON body. */
export type ApiHandler = (route: string, body: unknown) => Promise<ApiAnswer>;

/** Largest JSON body a write step takes (a plan of contrasts with their exclusions is a few KB). */
const MAX_API_BODY_BYTES = 1 << 20;

export interface DashboardServerOptions {
  /** Database file to serve read-only at DATABASE_URL_PATH. */
  dbPath: string;
  /** Folder of the built app (holds index.html). */
  appDir: string;
  /** The database's ledger file (JSON lines); absent: no ledger is served and the browser keeps its own count. */
  ledgerPath?: string;
  /** TCP port; 0 or absent picks a free one. */
  port?: number;
  /** Called once per answered request. */
  onRequest?: (entry: RequestLogEntry) => void;
  /** The workflow's write steps; absent: the dashboard only reads (POST /api/… answers 405). */
  api?: ApiHandler;
}

export interface DashboardServer {
  /** The address to open, with the access token: http://127.0.0.1:41234/?token=… */
  url: string;
  close(): Promise<void>;
}

export class DashboardServerError extends Error {
  constructor(
    message: string,
    readonly field: string,
    readonly value: string,
  ) {
    super(message);
    this.name = 'DashboardServerError';
  }
}

const CONTENT_TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.wasm': 'application/wasm',
  '.json': 'application/json; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.txt': 'text/plain; charset=utf-8',
  '.duckdb': 'application/octet-stream',
};

/** Percent-encoding of an RFC 5987 ext-value: every byte outside attr-char (RFC 5987 §3.2.1). */
function rfc5987(text: string): string {
  return encodeURIComponent(text).replace(/['()*!]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`);
}

function contentType(file: string): string {
  return CONTENT_TYPES[path.extname(file).toLowerCase()] ?? 'application/octet-stream';
}

// No CORS headers at all: only the app's own origin may read these files.
const SECURITY_HEADERS: Record<string, string> = {
  'Content-Security-Policy':
    "default-src 'self'; script-src 'self' 'wasm-unsafe-eval'; worker-src 'self' blob:; " +
    "connect-src 'self'; img-src 'self' data: blob:; style-src 'self' 'unsafe-inline'; " +
    "object-src 'none'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'",
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'no-referrer',
  'X-Frame-Options': 'DENY',
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Resource-Policy': 'same-origin',
  'Cache-Control': 'no-cache',
};

async function requireFile(p: string, field: string): Promise<string> {
  try {
    const real = await realpath(p);
    if (!(await stat(real)).isFile()) throw new Error('not a file');
    return real;
  } catch {
    throw new DashboardServerError(`${field} is not a readable file: ${p}`, field, p);
  }
}

async function requireDir(p: string, field: string): Promise<string> {
  try {
    const real = await realpath(p);
    if (!(await stat(real)).isDirectory()) throw new Error('not a folder');
    return real;
  } catch {
    throw new DashboardServerError(`${field} is not a folder: ${p}`, field, p);
  }
}

/** Start the server; resolves once it listens on 127.0.0.1. */
export async function startDashboardServer(options: DashboardServerOptions): Promise<DashboardServer> {
  const dbFile = await requireFile(options.dbPath, 'dbPath');
  const appRoot = await requireDir(options.appDir, 'appDir');
  await requireFile(path.join(appRoot, 'index.html'), 'appDir/index.html');
  const port = options.port ?? 0;
  if (!Number.isInteger(port) || port < 0 || port > 65535) {
    throw new DashboardServerError(`port must be an integer 0–65535, got ${port}`, 'port', String(port));
  }
  let allowedHosts: Set<string> = new Set();
  let listeningPort = 0;
  const token = newToken();

  const server = http.createServer((req, res) => {
    handle(req, res).catch(() => {
      if (!res.headersSent) send(res, req, 500, 'internal error');
      else res.destroy();
    });
  });

  function log(req: http.IncomingMessage, status: number, bytes: number): void {
    options.onRequest?.({
      method: req.method ?? '',
      path: withoutTokenValue(req.url ?? ''),
      status,
      bytes,
      ...(req.headers.range !== undefined ? { range: req.headers.range } : {}),
    });
  }

  function send(res: http.ServerResponse, req: http.IncomingMessage, status: number, text: string, extra: Record<string, string> = {}): void {
    const body = Buffer.from(text + '\n');
    res.writeHead(status, {
      ...SECURITY_HEADERS,
      'Content-Type': 'text/plain; charset=utf-8',
      'Content-Length': String(body.length),
      ...extra,
    });
    res.end(req.method === 'HEAD' ? undefined : body);
    log(req, status, 0);
  }

  /** 403 with no body: nothing about what is served is told to a request without the token. */
  function refuse(res: http.ServerResponse, req: http.IncomingMessage): void {
    res.writeHead(403, { ...SECURITY_HEADERS, 'Content-Length': '0' });
    res.end();
    log(req, 403, 0);
  }

  async function handle(req: http.IncomingMessage, res: http.ServerResponse): Promise<void> {
    // Refuse other Host names, so a page elsewhere cannot reach this server by DNS rebinding.
    if (!allowedHosts.has(req.headers.host ?? '')) {
      send(res, req, 403, 'forbidden host');
      return;
    }
    const raw = req.url ?? '';
    const queryAt = raw.indexOf('?');
    const pathOnly = queryAt < 0 ? raw : raw.slice(0, queryAt);
    const query = queryAt < 0 ? '' : raw.slice(queryAt + 1);
    const byCookie = cookieValues(req.headers.cookie, cookieName(listeningPort)).some((v) => isToken(v, token));
    const given = tokenParameters(query);
    const byQuery = given.length > 0 && given.every((v) => isToken(v, token));
    if (!byCookie && !byQuery) {
      refuse(res, req);
      return;
    }
    const method = req.method ?? '';
    if (pathOnly === LEDGER_URL_PATH && options.ledgerPath !== undefined) {
      if (method === 'POST' && !fromOwnOrigin(req)) {
        send(res, req, 403, 'forbidden origin');
        return;
      }
      const answer = await ledgerRoute(req, options.ledgerPath, path.basename(dbFile));
      send(res, req, answer.status, answer.text, answer.headers);
      return;
    }
    if (pathOnly.startsWith('/api/')) {
      await answerApi(req, res, pathOnly.slice('/api/'.length));
      return;
    }
    if (method !== 'GET' && method !== 'HEAD') {
      send(res, req, 405, 'method not allowed', { Allow: 'GET, HEAD' });
      return;
    }
    // the first page load: the token becomes a cookie, and the address loses it (history, bookmarks)
    if (given.length > 0 && (pathOnly === '/' || pathOnly.endsWith('.html'))) {
      res.writeHead(302, {
        ...SECURITY_HEADERS,
        Location: withoutTokenParameter(pathOnly, query),
        'Set-Cookie': tokenCookie(listeningPort, token),
        'Content-Length': '0',
      });
      res.end();
      log(req, 302, 0);
      return;
    }
    let target: { file: string; size: number } | null = null;
    if (pathOnly === DATABASE_URL_PATH) {
      const info = await stat(dbFile).catch(() => null);
      target = info?.isFile() ? { file: dbFile, size: info.size } : null;
    } else {
      const segments = requestSegments(pathOnly);
      if (segments !== null && segments[0] !== 'data') {
        target = await resolveInside(appRoot, segments.length === 0 ? ['index.html'] : segments);
      }
    }
    if (target === null) {
      send(res, req, 404, 'not found');
      return;
    }
    // Vite names files under assets/ by content hash, so they never change under one name.
    const cache = pathOnly.startsWith('/assets/') ? 'public, max-age=31536000, immutable' : 'no-cache';
    // the database carries its real file name, which the app shows (RFC 6266 §4.3, RFC 5987 ext-value)
    const named: Record<string, string> =
      pathOnly === DATABASE_URL_PATH ? { 'Content-Disposition': `inline; filename*=UTF-8''${rfc5987(path.basename(dbFile))}` } : {};
    await sendFile(req, res, target.file, target.size, cache, named);
  }

  function sendJson(res: http.ServerResponse, req: http.IncomingMessage, status: number, value: unknown): void {
    const body = Buffer.from(JSON.stringify(value));
    res.writeHead(status, { ...SECURITY_HEADERS, 'Content-Type': 'application/json; charset=utf-8', 'Content-Length': String(body.length) });
    res.end(body);
    log(req, status, body.length);
  }

  /** A request that names no origin (curl) or this server's own: never another site's page. */
  function fromOwnOrigin(req: http.IncomingMessage): boolean {
    const origin = req.headers.origin;
    return origin === undefined || allowedHosts.has(origin.replace(/^http:\/\//, ''));
  }

  async function answerApi(req: http.IncomingMessage, res: http.ServerResponse, route: string): Promise<void> {
    if (req.method !== 'POST') {
      send(res, req, 405, 'method not allowed', { Allow: 'POST' });
      return;
    }
    if (!options.api) {
      sendJson(res, req, 405, { error: 'this dashboard was started read-only (bandwise dashboard --read-only): run the step from the command line' });
      return;
    }
    if (!fromOwnOrigin(req)) {
      send(res, req, 403, 'forbidden origin');
      return;
    }
    if ((req.headers['content-type'] ?? '').split(';')[0].trim().toLowerCase() !== 'application/json') {
      send(res, req, 415, 'a JSON body is needed (Content-Type: application/json)');
      return;
    }
    const chunks: Buffer[] = [];
    let size = 0;
    for await (const chunk of req as AsyncIterable<Buffer>) {
      size += chunk.length;
      if (size > MAX_API_BODY_BYTES) {
        send(res, req, 413, `the body is larger than ${MAX_API_BODY_BYTES} bytes`, { Connection: 'close' });
        req.destroy();
        return;
      }
      chunks.push(chunk);
    }
    let body: unknown;
    try {
      body = JSON.parse(Buffer.concat(chunks).toString('utf8'));
    } catch {
      sendJson(res, req, 400, { error: 'the body is not JSON' });
      return;
    }
    const answer = await options.api(route, body);
    sendJson(res, req, answer.status, answer.body);
  }

  async function sendFile(
    req: http.IncomingMessage,
    res: http.ServerResponse,
    file: string,
    size: number,
    cacheControl: string,
    extra: Record<string, string> = {},
  ): Promise<void> {
    const headers = {
      ...SECURITY_HEADERS,
      ...extra,
      'Cache-Control': cacheControl,
      'Content-Type': contentType(file),
      'Accept-Ranges': 'bytes',
    };
    const range = parseRange(req.headers.range, size);
    if (range.kind === 'unsatisfiable') {
      send(res, req, 416, range.reason, { 'Content-Range': `bytes */${size}` });
      return;
    }
    const start = range.kind === 'single' ? range.range.start : 0;
    const end = range.kind === 'single' ? range.range.end : size - 1;
    const length = end - start + 1;
    const status = range.kind === 'single' ? 206 : 200;
    res.writeHead(status, {
      ...headers,
      'Content-Length': String(length),
      ...(status === 206 ? { 'Content-Range': `bytes ${start}-${end}/${size}` } : {}),
    });
    if (req.method === 'HEAD' || length === 0) {
      res.end();
      log(req, status, 0);
      return;
    }
    // 1-MiB pieces: duckdb-wasm asks for ranges of a few hundred KB to a few MB, and the 64-KiB
    // default made each one many small reads and writes (about 5× slower over loopback)
    await pipeline(createReadStream(file, { start, end, highWaterMark: 1 << 20 }), res);
    log(req, status, length);
  }

  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => {
      server.off('error', reject);
      resolve();
    });
  });
  const address = server.address();
  if (address === null || typeof address === 'string') throw new Error('server has no TCP address');
  allowedHosts = new Set([`127.0.0.1:${address.port}`, `localhost:${address.port}`]);
  listeningPort = address.port;

  return {
    url: `http://127.0.0.1:${address.port}/?token=${token}`,
    close: () =>
      new Promise<void>((resolve, reject) => {
        server.close((err) => (err ? reject(err) : resolve()));
        server.closeAllConnections();
      }),
  };
}
