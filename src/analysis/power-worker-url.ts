/**
 * Where power's simulation threads start when the sources run (development and tests): a
 * bootstrap that registers tsx's loader and loads power-worker.ts. The built command starts
 * dist/cli/power-worker.js instead (power-worker-url.built.ts, put in place of this module by
 * bin/build.mjs), so it runs no compiler.
 */
export const powerWorkerUrl = (): URL => new URL('./power-worker-bootstrap.mjs', import.meta.url);
