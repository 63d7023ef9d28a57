// Browser test harness: build the dashboard with Vite, serve it with the product's own server on
// a database file, and drive Debian's chromium through playwright-core. Records the server's
// request log, console errors and any request that leaves 127.0.0.1.
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { build } from 'vite';
import { startDashboardServer, type ApiHandler, type DashboardServer, type RequestLogEntry } from '../../src/server/serve.ts';

const repo = fileURLToPath(new URL('../../', import.meta.url));
export const CHROMIUM = '/usr/bin/chromium';
export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

/** Build the app into `outDir` with the project's vite.config.ts. */
export async function buildDashboard(outDir: string): Promise<void> {
  await build({
    configFile: path.join(repo, 'vite.config.ts'),
    logLevel: 'warn',
    build: { outDir, emptyOutDir: true },
  });
}

export interface DashboardSession {
  server: DashboardServer;
  context: BrowserContext;
  page: Page;
  /** Every request the server answered. */
  requests: RequestLogEntry[];
  /** Console errors and uncaught page errors. */
  consoleErrors: string[];
  /** Requests the page tried to send anywhere but 127.0.0.1 (they are aborted). */
  foreignRequests: string[];
  close(): Promise<void>;
}

const LOCAL_SCHEMES = new Set(['blob:', 'data:', 'about:']);

/**
 * Serve `appDir` with `dbPath`, open a fresh chromium profile on it. `ledgerPath`: the ledger the
 * server keeps beside the database (as `bandwise dashboard` does; absent, a fresh file of its own); `api`: the
 * workflow's write steps (absent, read-only).
 */
export async function openDashboard(appDir: string, dbPath: string, o: { ledgerPath?: string; api?: ApiHandler } = {}): Promise<DashboardSession> {
  const requests: RequestLogEntry[] = [];
  const consoleErrors: string[] = [];
  const foreignRequests: string[] = [];
  // as `bandwise dashboard` does, the server keeps a ledger; by default a fresh one of this session's own, not beside a shared database
  const ledgerDir = o.ledgerPath === undefined ? mkdtempSync(path.join(os.tmpdir(), 'bandwise-ledger-')) : null;
  const ledgerPath = o.ledgerPath ?? path.join(ledgerDir!, 'ledger.jsonl');
  const server = await startDashboardServer({ dbPath, appDir, ledgerPath, api: o.api, onRequest: (e) => requests.push(e) });
  const profile = mkdtempSync(path.join(os.tmpdir(), 'bandwise-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: CHROMIUM_ARGS,
    viewport: { width: 1280, height: 900 },
    acceptDownloads: true,
  });
  await context.route('**/*', (route) => {
    const url = new URL(route.request().url());
    if (LOCAL_SCHEMES.has(url.protocol) || url.hostname === '127.0.0.1') return route.continue();
    foreignRequests.push(url.href);
    return route.abort();
  });
  context.on('request', (r) => {
    const url = new URL(r.url());
    if (!LOCAL_SCHEMES.has(url.protocol) && url.hostname !== '127.0.0.1' && !foreignRequests.includes(url.href)) {
      foreignRequests.push(url.href);
    }
  });
  const page = context.pages()[0] ?? (await context.newPage());
  page.on('console', (m) => {
    if (m.type() === 'error') consoleErrors.push(m.text());
  });
  page.on('pageerror', (e) => consoleErrors.push(`page error: ${e.message}`));
  return {
    server,
    context,
    page,
    requests,
    consoleErrors,
    foreignRequests,
    close: async () => {
      await context.close();
      await server.close();
      rmSync(profile, { recursive: true, force: true });
      if (ledgerDir) rmSync(ledgerDir, { recursive: true, force: true });
    },
  };
}
