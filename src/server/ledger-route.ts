// The dashboard's way into the ledger beside the database (src/analysis/ledger.ts writes the same
// file from the command line): GET answers its lines, POST appends one analysis the browser ran.
// A posted line must be one JSON object of an analysis kind; the server sets its database name.
import { appendFileSync, existsSync, readFileSync } from 'node:fs';
import type http from 'node:http';
import { ANALYSIS_KINDS } from '../core/report/ledger.ts';

/** The largest ledger line accepted, bytes (a robustness run of a few thousand paths fits; our choice). */
export const MAX_LEDGER_LINE = 1 << 20;

export interface LedgerAnswer {
  status: number;
  text: string;
  headers: Record<string, string>;
}

const json = { 'Content-Type': 'application/x-ndjson; charset=utf-8' };

async function body(req: http.IncomingMessage): Promise<string | null> {
  const parts: Buffer[] = [];
  let size = 0;
  for await (const chunk of req) {
    size += (chunk as Buffer).length;
    if (size > MAX_LEDGER_LINE) return null;
    parts.push(chunk as Buffer);
  }
  return Buffer.concat(parts).toString('utf8');
}

export async function ledgerRoute(req: http.IncomingMessage, ledgerPath: string, databaseName: string): Promise<LedgerAnswer> {
  if (req.method === 'GET' || req.method === 'HEAD') {
    const text = existsSync(ledgerPath) ? readFileSync(ledgerPath, 'utf8').trimEnd() : '';
    return { status: 200, text, headers: json };
  }
  if (req.method !== 'POST') return { status: 405, text: 'method not allowed', headers: { Allow: 'GET, HEAD, POST' } };
  const text = await body(req);
  if (text === null) return { status: 413, text: `a ledger line is at most ${MAX_LEDGER_LINE} bytes`, headers: {} };
  let entry: unknown;
  try {
    entry = JSON.parse(text);
  } catch {
    return { status: 400, text: 'a ledger line must be JSON', headers: {} };
  }
  if (entry === null || typeof entry !== 'object' || Array.isArray(entry) || !ANALYSIS_KINDS.includes(String((entry as { kind?: unknown }).kind))) {
    return { status: 400, text: `a ledger line must be an object of kind ${ANALYSIS_KINDS.join(', ')}`, headers: {} };
  }
  try {
    appendFileSync(ledgerPath, JSON.stringify({ ...entry, database: databaseName }) + '\n');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code ?? 'error';
    return { status: 503, text: `the ledger cannot be written (${code})`, headers: {} };
  }
  return { status: 200, text: 'recorded', headers: {} };
}
