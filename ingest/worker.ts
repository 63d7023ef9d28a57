/**
 * Worker thread: per message either hashes one file (SHA-256, so the main thread can check
 * whether the recording is stored already without doing that work itself) or processes one
 * recording and posts the bundle back, its typed arrays transferred (not copied). Failures come
 * back as { step, field, message }.
 */
import { parentPort } from 'node:worker_threads';
import type { CohortRecording } from './cohort/types.ts';
import { bundleTransferList, fileSha256, PipelineError, processRecording, type IngestParams } from './pipeline.ts';

export type WorkRequest = HashRequest | ProcessRequest;

export interface HashRequest {
  id: number;
  kind: 'hash';
  file: string;
}

export interface ProcessRequest {
  id: number;
  kind: 'process';
  rec: CohortRecording;
  params: IngestParams;
  runId: string;
  fileSha256?: string;
}

export type WorkReply =
  | { id: number; kind: 'progress'; step: string; done: number; total: number }
  | { id: number; kind: 'hashed'; sha256: string }
  | { id: number; kind: 'done'; bundle: Awaited<ReturnType<typeof processRecording>> }
  | { id: number; kind: 'failed'; step: string; field: string | null; message: string };

if (!parentPort) throw new Error('ingest/worker.ts must run in a worker thread');
const port = parentPort;

port.on('message', async (req: WorkRequest) => {
  if (req.kind === 'hash') {
    try {
      port.postMessage({ id: req.id, kind: 'hashed', sha256: await fileSha256(req.file) } satisfies WorkReply);
    } catch (e) {
      port.postMessage({ id: req.id, kind: 'failed', step: 'hash', field: null, message: e instanceof Error ? e.message : String(e) } satisfies WorkReply);
    }
    return;
  }
  try {
    let last = 0;
    const bundle = await processRecording(req.rec, req.params, (p) => {
      const now = Date.now();
      if (now - last < 200 && p.done < p.total) return; // at most 5 progress messages a second
      last = now;
      port.postMessage({ id: req.id, kind: 'progress', step: p.step, done: p.done, total: p.total } satisfies WorkReply);
    }, req.runId, req.fileSha256);
    port.postMessage({ id: req.id, kind: 'done', bundle } satisfies WorkReply, bundleTransferList(bundle));
  } catch (e) {
    const step = e instanceof PipelineError ? e.step : 'process';
    const field = e instanceof PipelineError ? e.field : null;
    port.postMessage({ id: req.id, kind: 'failed', step, field, message: e instanceof Error ? e.message : String(e) } satisfies WorkReply);
  }
});
