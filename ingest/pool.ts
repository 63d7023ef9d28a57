/**
 * A pool of worker threads (default one per core), one recording per worker at a time: its hash,
 * the caller's check whether it is stored, and its processing. Results come back to the caller in
 * the main thread, which hands them to the single writer.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { CohortRecording } from './cohort/types.ts';
import type { IngestParams, PipelineProgress } from './pipeline.ts';
import type { ProcessRequest, WorkReply, WorkRequest } from './worker.ts';
import { ingestWorkerUrl } from './worker-code.ts';

export type ProcessedBundle = Extract<WorkReply, { kind: 'done' }>['bundle'];

/** A recording that failed in a worker: the pipeline step and message. */
export class WorkerTaskError extends Error {
  override name = 'WorkerTaskError';
  constructor(
    readonly step: string,
    readonly field: string | null,
    message: string,
  ) {
    super(message);
  }
}

interface Task {
  req: ProcessRequest;
  resolve: (result: ProcessedBundle | 'skipped') => void;
  reject: (e: Error) => void;
  onProgress?: (p: PipelineProgress) => void;
  isStored: (sha256: string) => Promise<boolean>;
}

interface Slot {
  worker: Worker;
  task: Task | null;
}

export class IngestPool {
  readonly size: number;
  private readonly slots: Slot[] = [];
  private readonly queue: Task[] = [];
  private nextId = 1;
  private closed = false;

  constructor(size: number = availableParallelism()) {
    if (!(Number.isInteger(size) && size >= 1)) throw new RangeError(`invalid number of workers: ${size}`);
    this.size = size;
    for (let i = 0; i < size; i++) this.slots.push(this.spawn());
  }

  private spawn(): Slot {
    const slot: Slot = { worker: new Worker(ingestWorkerUrl()), task: null };
    slot.worker.on('message', (m: WorkReply) => this.onMessage(slot, m));
    slot.worker.on('error', (e) => this.onCrash(slot, e));
    slot.worker.on('exit', (code) => {
      if (!this.closed) this.onCrash(slot, new Error(`worker exited with code ${code}`));
    });
    return slot;
  }

  /**
   * Processes one recording in the next free worker. The worker opens and hashes the file first
   * and asks `isStored`; when that says yes the result is 'skipped' and no samples are read.
   */
  process(
    rec: CohortRecording,
    params: IngestParams,
    runId: string,
    options: { onProgress?: (p: PipelineProgress) => void; isStored?: (sha256: string) => Promise<boolean> } = {},
  ): Promise<ProcessedBundle | 'skipped'> {
    if (this.closed) return Promise.reject(new Error('the pool is closed'));
    const req: ProcessRequest = { id: this.nextId++, kind: 'process', rec, params, runId };
    return new Promise((resolve, reject) => {
      this.queue.push({ req, resolve, reject, onProgress: options.onProgress, isStored: options.isStored ?? (async () => false) });
      this.dispatch();
    });
  }

  private dispatch(): void {
    for (const slot of this.slots) {
      if (slot.task || this.queue.length === 0) continue;
      slot.task = this.queue.shift()!;
      slot.worker.postMessage(slot.task.req);
    }
  }

  private onMessage(slot: Slot, m: WorkReply): void {
    const task = slot.task;
    if (!task || task.req.id !== m.id) return;
    if (m.kind === 'progress') {
      task.onProgress?.({ step: m.step as PipelineProgress['step'], done: m.done, total: m.total });
      return;
    }
    if (m.kind === 'hashed') {
      const answer = (stored: boolean) => {
        if (slot.task === task) slot.worker.postMessage({ id: m.id, kind: 'stored', stored } satisfies WorkRequest);
      };
      task.isStored(m.sha256).then(answer, (e: unknown) => {
        // the check itself failed: the task fails, the worker is told to drop it
        answer(true);
        slot.task = null;
        task.reject(e instanceof Error ? e : new Error(String(e)));
        this.dispatch();
      });
      return;
    }
    slot.task = null;
    if (m.kind === 'done') task.resolve(m.bundle);
    else if (m.kind === 'skipped') task.resolve('skipped');
    else task.reject(new WorkerTaskError(m.step, m.field, m.message));
    this.dispatch();
  }

  /** A worker died (out of memory, native crash): fail its task, replace the worker, go on. */
  private onCrash(slot: Slot, e: Error): void {
    const task = slot.task;
    slot.task = null;
    const i = this.slots.indexOf(slot);
    if (i >= 0 && !this.closed) {
      slot.worker.removeAllListeners();
      void slot.worker.terminate();
      this.slots[i] = this.spawn();
    }
    task?.reject(new WorkerTaskError('worker', null, `worker thread failed: ${e.message}`));
    this.dispatch();
  }

  /** Stops every worker; tasks queued or in progress fail with "the pool was closed". */
  async close(): Promise<void> {
    this.closed = true;
    for (const t of this.queue.splice(0)) t.reject(new Error('the pool was closed'));
    for (const s of this.slots) {
      const task = s.task;
      s.task = null;
      task?.reject(new Error('the pool was closed'));
    }
    await Promise.all(this.slots.map((s) => s.worker.terminate()));
  }
}
