// Worker thread entry of `bandwise compare`'s permutation threads when the sources run (development
// and tests; see compare-worker-url.ts): registers tsx's loader (Node 20 runs no TypeScript by
// itself, see bin/run-ts.mjs) and loads the TypeScript worker beside it. The built command never
// loads this file: it starts dist/cli/compare-worker.js.
import { register } from 'tsx/esm/api';

register();
await import('./compare-worker.ts');
