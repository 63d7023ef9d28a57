// duckdb-wasm's worker, its 34 MB wasm fetch and compile start first, in parallel with the
// evaluation and first render of the app's own code (loaded as a second chunk).
import { preloadEngine } from './db/connection.ts';
import './app.css';

preloadEngine();

const [{ mount }, { default: App }] = await Promise.all([import('svelte'), import('./App.svelte')]);
const target = document.getElementById('app');
if (target === null) throw new Error('index.html has no #app element');
mount(App, { target });
