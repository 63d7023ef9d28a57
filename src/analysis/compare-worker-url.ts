/**
 * Where compare's permutation threads start when the sources run (development and tests): a
 * bootstrap that registers tsx's loader and loads compare-worker.ts. The built command starts
 * dist/cli/compare-worker.js instead (compare-worker-url.built.ts, put in place of this module
 * by bin/build.mjs), so it runs no compiler.
 */
export const compareWorkerUrl = (): URL => new URL('./compare-worker-bootstrap.mjs', import.meta.url);
