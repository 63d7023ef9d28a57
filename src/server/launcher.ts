/**
 * Serves the built dashboard and one database on 127.0.0.1; builds the app first when the build
 * is missing (Vite, a development dependency, is installed by `npm ci`).
 */
import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startDashboardServer } from './serve.ts';

const repo = fileURLToPath(new URL('../..', import.meta.url));
export const APP_DIR = path.join(repo, 'dist', 'dashboard');

export async function ensureDashboardBuilt(rebuild = false, log: (s: string) => void = () => {}): Promise<string> {
  if (rebuild || !existsSync(path.join(APP_DIR, 'index.html'))) {
    log('building the dashboard (once) …');
    const { build } = await import('vite');
    await build({ configFile: path.join(repo, 'vite.config.ts'), logLevel: 'warn', build: { outDir: APP_DIR, emptyOutDir: true } });
  }
  return APP_DIR;
}

export async function serveDashboard(dbPath: string, port?: number, rebuild = false, log: (s: string) => void = console.log) {
  if (!existsSync(dbPath)) throw new Error(`no database at ${dbPath}`);
  const appDir = await ensureDashboardBuilt(rebuild, log);
  return startDashboardServer({ dbPath: path.resolve(dbPath), appDir, port });
}

/** Resolves on Ctrl-C (SIGINT) or SIGTERM: the end of serving. */
export function waitForSignal(): Promise<void> {
  return new Promise((resolve) => {
    const done = () => resolve();
    process.once('SIGINT', done);
    process.once('SIGTERM', done);
  });
}
