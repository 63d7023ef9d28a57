// Worker thread entry: registers tsx's loader (Node 20 runs no TypeScript by itself, see
// bin/run-ts.mjs) and then loads the TypeScript worker module beside this file.
import { register } from 'tsx/esm/api';

register();
await import('./worker.ts');
