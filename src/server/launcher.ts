/**
 * Serves the built dashboard (dist/dashboard/, made by `npm run build`) and one database on
 * 127.0.0.1. Nothing is compiled at run time: without the built app it says how to build it.
 */
import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startDashboardServer } from './serve.ts';
import { workflowApi } from './workflow-api.ts';

// the sources (src/server/) and the built command (dist/cli/) both lie two folders below the package
const root = fileURLToPath(new URL('../..', import.meta.url));
export const APP_DIR = path.join(root, 'dist', 'dashboard');

/** The dashboard app has not been built (dist/dashboard/index.html is missing). */
export class AppNotBuiltError extends Error {
  override name = 'AppNotBuiltError';
}

/** The built app's folder, or an AppNotBuiltError whose one line says how to build it. */
export function dashboardAppDir(): string {
  if (!existsSync(path.join(APP_DIR, 'index.html'))) {
    throw new AppNotBuiltError(`the dashboard app is not built (no ${path.join(APP_DIR, 'index.html')}): run \`npm run build\` in ${root}`);
  }
  return APP_DIR;
}

/**
 * Serves the app and the database. The browser's analyses go to the database's ledger (default
 * <database>.ledger.jsonl, as the commands), and unless read-only the workflow's steps (split,
 * lock, confirm) may be taken from the dashboard, recorded in the same ledger.
 */
export async function serveDashboard(dbPath: string, port?: number, o: { readOnly?: boolean; ledgerPath?: string } = {}) {
  if (!existsSync(dbPath)) throw new Error(`no database at ${dbPath}`);
  const db = path.resolve(dbPath);
  const ledgerPath = path.resolve(o.ledgerPath ?? `${dbPath}.ledger.jsonl`);
  return startDashboardServer({ dbPath: db, appDir: dashboardAppDir(), port, ledgerPath, api: o.readOnly ? undefined : workflowApi(db, ledgerPath) });
}

/** Resolves on Ctrl-C (SIGINT) or SIGTERM: the end of serving. */
export function waitForSignal(): Promise<void> {
  return new Promise((resolve) => {
    const done = () => resolve();
    process.once('SIGINT', done);
    process.once('SIGTERM', done);
  });
}
