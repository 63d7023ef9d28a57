/**
 * Worker thread: per message it processes one recording and posts the bundle back, its typed
 * arrays transferred (not copied). It opens the file (hashing it in the same reads as the
 * annotations) and asks the main thread whether that recording is stored already ('hashed' →
 * 'stored'), so the hash, the check and the work of one recording stay on one worker and the
 * main thread only writes. Failures come back as { step, field, message }.
 */
import { parentPort } from 'node:worker_threads';
import type { CohortRecording } from './cohort/types.ts';
import { bundleTransferList, openRecording, PipelineError, processOpened, type OpenedRecording, type IngestParams } from './pipeline.ts';

export type WorkRequest = ProcessRequest | StoredAnswer;

export interface ProcessRequest {
  id: number;
  kind: 'process';
  rec: CohortRecording;
  params: IngestParams;
  runId: string;
}

/** The main thread's answer to 'hashed': whether the recording with that hash is stored. */
export interface StoredAnswer {
  id: number;
  kind: 'stored';
  stored: boolean;
}

export type WorkReply =
  | { id: number; kind: 'progress'; step: string; done: number; total: number }
  | { id: number; kind: 'hashed'; sha256: string }
  | { id: number; kind: 'skipped' }
  | { id: number; kind: 'done'; bundle: Awaited<ReturnType<typeof processOpened>> }
  | { id: number; kind: 'failed'; step: string; field: string | null; message: string };

if (!parentPort) throw new Error('ingest/worker.ts must run in a worker thread');
const port = parentPort;

// Detach one buffer before any hot loop is optimised. The first ArrayBuffer detached in an isolate
// (here: the first bundle's transferred arrays) discards every piece of optimised code that relied
// on no buffer ever being detached (V8's detaching protector), so the whole pipeline would be
// compiled twice per worker; detached now, it is compiled once.
const probe = new ArrayBuffer(8);
structuredClone(probe, { transfer: [probe] });

/** answers awaited, by request id */
const waiting = new Map<number, (stored: boolean) => void>();

const failed = (id: number, step: string, field: string | null, e: unknown): WorkReply => ({
  id,
  kind: 'failed',
  step,
  field,
  message: e instanceof Error ? e.message : String(e),
});

const failure = (id: number, e: unknown): WorkReply =>
  failed(id, e instanceof PipelineError ? e.step : 'process', e instanceof PipelineError ? e.field : null, e);

async function processOne(req: ProcessRequest): Promise<void> {
  let opened: OpenedRecording;
  try {
    opened = await openRecording(req.rec);
  } catch (e) {
    port.postMessage(failure(req.id, e) satisfies WorkReply);
    return;
  }
  const stored = new Promise<boolean>((resolve) => waiting.set(req.id, resolve));
  port.postMessage({ id: req.id, kind: 'hashed', sha256: opened.sha256 } satisfies WorkReply);
  if (await stored) {
    await opened.edf.close().catch(() => undefined); // read-only: nothing is lost if the close fails
    port.postMessage({ id: req.id, kind: 'skipped' } satisfies WorkReply);
    return;
  }
  try {
    let last = 0;
    const bundle = await processOpened(
      req.rec,
      opened,
      req.params,
      (p) => {
        const now = Date.now();
        if (now - last < 200 && p.done < p.total) return; // at most 5 progress messages a second
        last = now;
        port.postMessage({ id: req.id, kind: 'progress', step: p.step, done: p.done, total: p.total } satisfies WorkReply);
      },
      req.runId,
    );
    port.postMessage({ id: req.id, kind: 'done', bundle } satisfies WorkReply, bundleTransferList(bundle));
  } catch (e) {
    port.postMessage(failure(req.id, e) satisfies WorkReply);
  }
}

port.on('message', (req: WorkRequest) => {
  if (req.kind === 'stored') {
    waiting.get(req.id)?.(req.stored);
    waiting.delete(req.id);
    return;
  }
  void processOne(req);
});
