/**
 * The ingest worker as one plain-JavaScript module: ingest/worker.ts and everything it imports,
 * bundled by esbuild once per process and handed to each worker as a data: URL. The workers then
 * run without the TypeScript loader, which would otherwise transform and resolve every module
 * again in each worker, on the same two cores the workers compute on (measured on 8 recordings,
 * two workers: 8.0 → 7.2 CPU-s per run, tests/bench/ingest.bench.ts).
 *
 * This is for running the sources (development, tests): the built command has no esbuild and
 * starts the prebuilt dist/cli/ingest-worker.js instead (worker-code.built.ts, which bin/build.mjs
 * puts in place of this module).
 */
import { buildSync } from 'esbuild';
import { fileURLToPath } from 'node:url';

let cached: URL | null = null;

/** The bundled worker module (built on first use, ~20 ms). */
export function ingestWorkerUrl(): URL {
  if (cached === null) {
    const built = buildSync({
      entryPoints: [fileURLToPath(new URL('./worker.ts', import.meta.url))],
      bundle: true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      write: false,
      logLevel: 'silent',
    });
    cached = new URL(`data:text/javascript;base64,${Buffer.from(built.outputFiles[0].contents).toString('base64')}`);
  }
  return cached;
}
