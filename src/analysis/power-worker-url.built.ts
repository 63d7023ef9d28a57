/**
 * Where power's simulation threads start in the built command: dist/cli/power-worker.js, made by
 * `npm run build` beside the module that starts it. bin/build.mjs puts this module in place of
 * power-worker-url.ts (the sources' tsx bootstrap).
 */
import type { powerWorkerUrl as fromSources } from './power-worker-url.ts';

export const powerWorkerUrl: typeof fromSources = () => new URL('./power-worker.js', import.meta.url);
