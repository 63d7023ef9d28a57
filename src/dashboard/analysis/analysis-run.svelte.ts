// The run state every analysis view shares (contrast, band check, robustness): reading the rows
// (through a cache, once per key), the worker job with its progress and cancel, the result with the
// key of the input it answers (a changed form marks it stale), the error, and the one run a link
// with run=1 starts on its own. Every run is a numbered request and only the latest request's
// answer, progress or error is shown: a newer run stops the older job, and an older read or job
// that settles later is dropped.
import { untrack } from 'svelte';
import { errorText } from './error-text.ts';

export interface Progress {
  /** what the job is doing, '' when it does not say */
  step: string;
  done: number;
  total: number;
}

/** A started worker job (workers/contrast-runner.ts, workers/verdict-runner.ts). */
export interface RunningJob<R> {
  result: Promise<{ result: R }>;
  cancel(): void;
}

/** Promises by key: rows are read once per key; a rejected read is forgotten so the next run reads again. */
export class PromiseCache {
  // eslint-disable-next-line svelte/prefer-svelte-reactivity -- a cache, never read by markup
  private entries = new Map<string, Promise<unknown>>();

  get<T>(key: string, load: () => Promise<T>): Promise<T> {
    let entry = this.entries.get(key) as Promise<T> | undefined;
    if (entry === undefined) {
      entry = load();
      entry.catch(() => this.entries.delete(key));
      this.entries.set(key, entry);
    }
    return entry;
  }
}

/** What one kind of analysis does: input I (the parsed form), data D (the rows read), result R. */
export interface AnalysisSteps<I, D, R> {
  /** identity of an input: the result is stale once the form's input has another key */
  key(input: I): string;
  /** read what the run needs, through the cache */
  read(input: I, cache: PromiseCache): Promise<D>;
  /** start the computation; progress goes through `progress` */
  start(input: I, data: D, progress: (p: Progress) => void): RunningJob<R>;
  /** once the result is shown: ledger entry, last result, address bar */
  finish?(input: I, data: D, result: R): void;
}

const NO_PROGRESS: Progress = { step: '', done: 0, total: 0 };

export class AnalysisRun<I, D, R> {
  phase: 'idle' | 'reading' | 'running' = $state('idle');
  progress: Progress = $state.raw(NO_PROGRESS);
  result: R | null = $state.raw(null);
  /** key of the input the result answers */
  resultKey: string | null = $state(null);
  /** wall time of the run that gave the result, s (reading included) */
  seconds = $state(0);
  error: string | null = $state(null);

  readonly cache = new PromiseCache();
  private readonly steps: AnalysisSteps<I, D, R>;
  private latest = 0;
  private job: RunningJob<R> | null = null;
  private autoRan = false;

  constructor(steps: AnalysisSteps<I, D, R>) {
    this.steps = steps;
  }

  get busy(): boolean {
    return this.phase !== 'idle';
  }

  /** Whether the shown result answers another input than this one (null: the form does not parse). */
  isStale(input: I | null): boolean {
    return this.result !== null && input !== null && this.steps.key(input) !== this.resultKey;
  }

  /** Run the analysis of `input`; a run still going is stopped and its answer dropped. */
  async run(input: I): Promise<void> {
    this.stopJob();
    const id = ++this.latest;
    const current = () => id === this.latest;
    this.error = null;
    this.progress = NO_PROGRESS;
    this.phase = 'reading';
    const t0 = performance.now();
    try {
      const data = await this.steps.read(input, this.cache);
      if (!current()) return;
      this.job = this.steps.start(input, data, (p) => {
        if (current()) this.progress = p;
      });
      this.phase = 'running';
      const { result } = await this.job.result;
      if (!current()) return;
      this.result = result;
      this.resultKey = this.steps.key(input);
      this.seconds = (performance.now() - t0) / 1000;
      this.end();
      this.steps.finish?.(input, data, result);
    } catch (err) {
      if (!current()) return;
      this.error = errorText(err);
      this.end();
    }
  }

  /** Stop the run going (its answer is dropped); the shown result stays. */
  cancel(): void {
    this.latest++;
    this.stopJob();
    this.end();
  }

  /**
   * The run a link starts on its own: once, when the address asks for a result (run=1), the input
   * is ready and nothing is shown or running yet. Call it from an $effect.
   */
  autoRun(asked: boolean, input: I | null): void {
    if (this.autoRan || !asked || input === null || this.result !== null || this.busy) return;
    this.autoRan = true;
    // the run's reads (exclusions, session) must not become the calling effect's dependencies
    untrack(() => void this.run(input));
  }

  private stopJob(): void {
    const job = this.job;
    this.job = null;
    job?.cancel();
  }

  private end(): void {
    this.job = null;
    this.phase = 'idle';
    this.progress = NO_PROGRESS;
  }
}
