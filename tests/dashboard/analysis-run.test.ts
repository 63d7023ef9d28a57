// The run state every analysis view shares (src/dashboard/analysis/analysis-run.svelte.ts) and the
// latest-answer guard of its loads (latest-answer.svelte.ts), driven by hand-resolved promises so
// the order in which answers arrive is chosen by the test. The rule checked is the dashboard's own
// (issue 16: only the latest request's answer is shown); no outside reference applies.
import { describe, expect, it } from 'vitest';
import { AnalysisRun, PromiseCache, type AnalysisSteps, type Progress, type RunningJob } from '../../src/dashboard/analysis/analysis-run.svelte.ts';
import { LatestAnswer } from '../../src/dashboard/analysis/latest-answer.svelte.ts';

/** A promise with its resolve and reject in hand. */
function deferred<T>() {
  let resolve!: (v: T) => void;
  let reject!: (e: unknown) => void;
  const promise = new Promise<T>((res, rej) => {
    resolve = res;
    reject = rej;
  });
  return { promise, resolve, reject };
}

/** Let every settled promise run its callbacks. */
const settle = () => new Promise((r) => setTimeout(r, 0));

interface Input {
  stage: string;
  table: string;
}

/** Steps whose reads and jobs are answered by the test, one deferred per input. */
function steps() {
  const reads = new Map<string, ReturnType<typeof deferred<string>>>();
  const jobs = new Map<string, ReturnType<typeof deferred<{ result: string }>> & { cancelled: boolean; progress: (p: Progress) => void }>();
  const loads: string[] = [];
  const finished: string[] = [];
  const s: AnalysisSteps<Input, string, string> = {
    key: (i) => `${i.stage}|${i.table}`,
    read: (i, cache: PromiseCache) =>
      cache.get(i.table, () => {
        loads.push(i.table);
        const d = deferred<string>();
        reads.set(i.stage, d);
        return d.promise;
      }),
    start: (i, data, progress): RunningJob<string> => {
      const d = { ...deferred<{ result: string }>(), cancelled: false, progress };
      jobs.set(i.stage, d);
      return { result: d.promise, cancel: () => ((d.cancelled = true), d.reject(new Error('cancelled'))) };
    },
    finish: (i, data, result) => finished.push(`${result} from ${data}`),
  };
  return { s, reads, jobs, loads, finished };
}

describe('AnalysisRun', () => {
  it('shows only the latest request: a slow older run finishing after a newer one does not replace its result', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const older = run.run({ stage: 'N2', table: 'a' });
    await settle();
    t.reads.get('N2')!.resolve('rows a');
    await settle();
    // the older run is computing; a newer request with other rows starts
    const newer = run.run({ stage: 'N3', table: 'b' });
    await settle();
    t.reads.get('N3')!.resolve('rows b');
    await settle();
    t.jobs.get('N3')!.resolve({ result: 'N3 result' });
    await newer;
    expect(run.result).toBe('N3 result');
    // the older job was stopped when the newer request started, and its late answer is dropped
    expect(t.jobs.get('N2')!.cancelled).toBe(true);
    t.jobs.get('N2')!.resolve({ result: 'N2 result' });
    await older;
    await settle();
    expect(run.result).toBe('N3 result');
    expect(run.resultKey).toBe('N3|b');
    expect(run.error).toBeNull();
    expect(t.finished).toEqual(['N3 result from rows b']);
    expect(run.phase).toBe('idle');
  });

  it('drops an older read that answers after a newer run has finished', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const older = run.run({ stage: 'N2', table: 'a' });
    const newer = run.run({ stage: 'N3', table: 'b' });
    await settle();
    t.reads.get('N3')!.resolve('rows b');
    await settle();
    t.jobs.get('N3')!.resolve({ result: 'N3 result' });
    await newer;
    t.reads.get('N2')!.resolve('rows a');
    await older;
    await settle();
    expect(t.jobs.has('N2')).toBe(false);
    expect(run.result).toBe('N3 result');
  });

  it('reports progress of the latest job only, and marks a result stale when the input changes', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const a = { stage: 'N2', table: 'a' };
    const p = run.run(a);
    expect(run.phase).toBe('reading');
    await settle();
    t.reads.get('N2')!.resolve('rows a');
    await settle();
    expect(run.phase).toBe('running');
    t.jobs.get('N2')!.progress({ step: 'permutations', done: 3, total: 10 });
    expect(run.progress).toEqual({ step: 'permutations', done: 3, total: 10 });
    t.jobs.get('N2')!.resolve({ result: 'r' });
    await p;
    expect(run.isStale(a)).toBe(false);
    expect(run.isStale({ ...a, stage: 'N3' })).toBe(true);
    // an input that does not parse shows the result as it is
    expect(run.isStale(null)).toBe(false);
    expect(run.seconds).toBeGreaterThanOrEqual(0);
  });

  it('cancel stops the job, shows no error and keeps the previous result', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const first = run.run({ stage: 'N2', table: 'a' });
    await settle();
    t.reads.get('N2')!.resolve('rows a');
    await settle();
    t.jobs.get('N2')!.resolve({ result: 'first' });
    await first;
    const second = run.run({ stage: 'N3', table: 'a' });
    await settle();
    expect(run.phase).toBe('running');
    run.cancel();
    expect(t.jobs.get('N3')!.cancelled).toBe(true);
    expect(run.phase).toBe('idle');
    await second;
    expect(run.error).toBeNull();
    expect(run.result).toBe('first');
    expect(run.progress).toEqual({ step: '', done: 0, total: 0 });
  });

  it('cancel while reading: the rows that arrive later start no job', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const p = run.run({ stage: 'N2', table: 'a' });
    run.cancel();
    expect(run.phase).toBe('idle');
    await settle();
    t.reads.get('N2')!.resolve('rows a');
    await p;
    expect(t.jobs.size).toBe(0);
    expect(run.result).toBeNull();
  });

  it('reads rows once per cache key; a failed read is shown and read again on the next run', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const one = run.run({ stage: 'N2', table: 'a' });
    await settle();
    t.reads.get('N2')!.reject(new Error('no N2 spectra with reference average'));
    await one;
    expect(run.error).toBe('no N2 spectra with reference average');
    expect(run.phase).toBe('idle');
    const two = run.run({ stage: 'N2', table: 'a' });
    await settle();
    expect(t.loads).toEqual(['a', 'a']);
    t.reads.get('N2')!.resolve('rows a');
    await settle();
    expect(run.error).toBeNull();
    t.jobs.get('N2')!.resolve({ result: 'x' });
    await two;
    // same table, other stage: a cache hit, no new read
    const three = run.run({ stage: 'N3', table: 'a' });
    await settle();
    expect(t.loads).toEqual(['a', 'a']);
    t.jobs.get('N3')!.resolve({ result: 'y' });
    await three;
    expect(t.finished).toEqual(['x from rows a', 'y from rows a']);
  });

  it('runs once on its own when the address asks for a result and the input is ready', async () => {
    const t = steps();
    const run = new AnalysisRun(t.s);
    const a = { stage: 'N2', table: 'a' };
    run.autoRun(false, a);
    run.autoRun(true, null);
    expect(run.phase).toBe('idle');
    run.autoRun(true, a);
    expect(run.phase).toBe('reading');
    run.autoRun(true, a);
    await settle();
    expect(t.loads).toEqual(['a']);
    t.reads.get('N2')!.resolve('rows a');
    await settle();
    t.jobs.get('N2')!.resolve({ result: 'r' });
    await settle();
    expect(run.result).toBe('r');
    // a reopened address (run=1 again, after the result) starts nothing
    run.autoRun(true, { stage: 'N3', table: 'a' });
    expect(run.phase).toBe('idle');
  });
});

describe('PromiseCache', () => {
  it('hands every caller of a key the same promise and forgets a rejected one', async () => {
    const cache = new PromiseCache();
    let calls = 0;
    const load = () => (++calls === 1 ? Promise.reject(new Error('down')) : Promise.resolve(calls));
    await expect(cache.get('k', load)).rejects.toThrow('down');
    await settle();
    expect(await cache.get('k', load)).toBe(2);
    expect(await cache.get('k', load)).toBe(2);
    expect(calls).toBe(2);
  });
});

describe('LatestAnswer', () => {
  it('keeps the newest request: an older load answering last is dropped (the robustness view’s fit ranges on a quick stage change)', async () => {
    const answer = new LatestAnswer<string>();
    const n2 = deferred<string>();
    const n3 = deferred<string>();
    answer.request(() => n2.promise);
    answer.request(() => n3.promise);
    expect(answer.value).toBeNull();
    n3.resolve('N3 fit ranges');
    await settle();
    n2.resolve('N2 fit ranges');
    await settle();
    expect(answer.value).toBe('N3 fit ranges');
  });

  it('shows the error of the newest request only', async () => {
    const answer = new LatestAnswer<string>();
    const old = deferred<string>();
    answer.request(() => old.promise);
    answer.request(() => Promise.resolve('fresh'));
    await settle();
    old.reject(new Error('stale failure'));
    await settle();
    expect(answer.value).toBe('fresh');
    expect(answer.error).toBeNull();
    answer.request(() => Promise.reject(new Error('no aperiodic fit stored')));
    expect(answer.value).toBeNull();
    await settle();
    expect(answer.error).toBe('no aperiodic fit stored');
  });
});
