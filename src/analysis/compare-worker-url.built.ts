/**
 * Where compare's permutation threads start in the built command: dist/cli/compare-worker.js,
 * made by `npm run build` beside the module that starts it. bin/build.mjs puts this module in
 * place of compare-worker-url.ts (the sources' tsx bootstrap).
 */
import type { compareWorkerUrl as fromSources } from './compare-worker-url.ts';

export const compareWorkerUrl: typeof fromSources = () => new URL('./compare-worker.js', import.meta.url);
