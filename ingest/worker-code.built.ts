/**
 * The ingest worker of the built command: dist/cli/ingest-worker.js, made by `npm run build`
 * beside the module that starts it. bin/build.mjs puts this module in place of worker-code.ts,
 * which bundles the worker from the sources at run time (development and tests only), so the
 * built command runs no compiler.
 */
import type { ingestWorkerUrl as fromSources } from './worker-code.ts';

export const ingestWorkerUrl: typeof fromSources = () => new URL('./ingest-worker.js', import.meta.url);
