import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Store } from '../../ingest/store/writer.ts';

/** A fresh temp folder per test file; remove it with the returned cleanup. */
export function tempDir(): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(join(tmpdir(), 'bandwise-store-'));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

export async function sql(store: Store, text: string, values: (string | number | boolean | null)[] = []): Promise<Record<string, unknown>[]> {
  return store.exclusive(async () => (await store.connection.runAndReadAll(text, values)).getRowObjectsJS());
}

export async function count(store: Store, table: string, where = 'TRUE', values: (string | number | null)[] = []): Promise<number> {
  const rows = await sql(store, `SELECT count(*)::INTEGER AS n FROM "${table}" WHERE ${where}`, values);
  return Number(rows[0].n);
}
