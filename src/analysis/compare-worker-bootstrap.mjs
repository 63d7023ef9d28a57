// Worker thread entry of `bandwise compare`'s permutation threads: registers tsx's loader (Node 20
// runs no TypeScript by itself, see bin/run-ts.mjs) and loads the TypeScript worker beside it.
import { register } from 'tsx/esm/api';

register();
await import('./compare-worker.ts');
