// A worker job whose result is stamped with the part of the split it used (and pooled when the
// groups are blinded) before any view, ledger or export sees it (src/core/confirmation/part-result.ts).
import type { RunningJob } from '../analysis/analysis-run.svelte.ts';

export function partJob<R, S>(job: RunningJob<R>, stamp: (r: R) => S): RunningJob<S> {
  return { result: job.result.then(({ result }) => ({ result: stamp(result) })), cancel: () => job.cancel() };
}
