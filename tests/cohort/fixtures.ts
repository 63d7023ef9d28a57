import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect } from 'vitest';
import { CohortError } from '../../ingest/cohort/types.ts';

/** A fresh temporary folder and a writer of files inside it (parents created). */
export function tempFolder(prefix: string): { dir: string; put: (rel: string, text?: string) => string } {
  const dir = mkdtempSync(path.join(tmpdir(), prefix));
  const put = (rel: string, text = '') => {
    const p = path.join(dir, rel);
    mkdirSync(path.dirname(p), { recursive: true });
    writeFileSync(p, text);
    return p;
  };
  return { dir, put };
}

export async function cohortError(p: Promise<unknown> | (() => unknown)): Promise<CohortError> {
  try {
    await (typeof p === 'function' ? p() : p);
  } catch (e) {
    expect(e).toBeInstanceOf(CohortError);
    return e as CohortError;
  }
  throw new Error('expected a CohortError');
}
