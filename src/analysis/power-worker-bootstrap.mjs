// Worker thread entry of `bandwise power`'s simulation threads: registers tsx's loader (Node 20
// runs no TypeScript by itself, see bin/run-ts.mjs) and loads the TypeScript worker beside it.
import { register } from 'tsx/esm/api';

register();
await import('./power-worker.ts');
