/**
 * Stable identities: a run is its parameters (canonical JSON, keys sorted, hashed), a recording
 * is (run, file hash). Both are deterministic, so a rerun, a resumed run and a merged shard
 * give the same ids.
 */
import { createHash } from 'node:crypto';
import { StoreError } from './errors.ts';

/** JSON with object keys sorted at every level; refuses values JSON cannot hold faithfully. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(sortKeys(value, '$'));
}

function sortKeys(value: unknown, path: string): unknown {
  if (value === null || typeof value === 'string' || typeof value === 'boolean') return value;
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw new StoreError(`parameter ${path} is ${value}; JSON cannot hold it`);
    return value;
  }
  if (Array.isArray(value)) return value.map((v, i) => sortKeys(v, `${path}[${i}]`));
  if (typeof value === 'object' && Object.getPrototypeOf(value) === Object.prototype) {
    const out: Record<string, unknown> = {};
    for (const key of Object.keys(value as object).sort()) {
      const v = (value as Record<string, unknown>)[key];
      if (v !== undefined) out[key] = sortKeys(v, `${path}.${key}`);
    }
    return out;
  }
  throw new StoreError(`parameter ${path} is a ${typeof value} (${Object.prototype.toString.call(value)}); only plain JSON values are allowed`);
}

export function sha256Hex(text: string): string {
  return createHash('sha256').update(text, 'utf8').digest('hex');
}

/** run_id: the first 16 hex digits of SHA-256 of the canonical parameters JSON. */
export function runIdentity(parameters: unknown): { runId: string; json: string; sha256: string } {
  const json = canonicalJson(parameters);
  const sha256 = sha256Hex(json);
  return { runId: sha256.slice(0, 16), json, sha256 };
}

const SHA256_HEX = /^[0-9a-f]{64}$/;

/** recording_id: the first 16 hex digits of SHA-256 of "<run_id>:<file_sha256>". */
export function recordingIdFor(runId: string, fileSha256: string): string {
  if (!SHA256_HEX.test(fileSha256)) throw new StoreError(`file_sha256 must be 64 lowercase hex digits, got ${JSON.stringify(fileSha256)}`);
  return sha256Hex(`${runId}:${fileSha256}`).slice(0, 16);
}
