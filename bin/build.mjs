#!/usr/bin/env node
// `npm run build` (also run by `npm ci`/`npm install` in the repository and by `npm pack`, as the
// `prepare` script): the installed command as plain JavaScript, so nothing is compiled at run time.
//   dist/cli/bandwise.js        the command line (src/cli/main.ts), `bin` of package.json
//   dist/cli/ingest-worker.js   the ingest worker thread (ingest/worker.ts)
//   dist/cli/compare-worker.js  compare's permutation thread (src/analysis/compare-worker.ts)
//   dist/cli/power-worker.js    power's simulation thread (src/analysis/power-worker.ts)
//   dist/cli/*-<hash>.js        code shared by these and the commands' parts loaded on use
//   dist/dashboard/             the dashboard app (Vite, vite.config.ts)
// npm packages are bundled, except the native modules: DuckDB's binding (@duckdb/node-bindings) and
// the PNG rasteriser of `bandwise figure` (@resvg/resvg-js), both loaded from node_modules.
import { chmodSync, readFileSync, rmSync } from 'node:fs';
import { builtinModules } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { build as buildApp } from 'vite';

const root = fileURLToPath(new URL('..', import.meta.url));
const cliDir = path.join(root, 'dist', 'cli');

// Source modules that differ in the build: each runs the sources' way (tsx, esbuild at run time,
// for development and tests) and is replaced in dist/ by its `.built.ts` twin, which starts the
// prebuilt worker file beside it.
const BUILT_TWINS = ['ingest/worker-code.ts', 'src/analysis/compare-worker-url.ts', 'src/analysis/power-worker-url.ts'].map((f) => path.join(root, f));

/** esbuild plugin: bundle X.built.ts wherever X.ts (one of BUILT_TWINS) is imported. */
const builtTwins = {
  name: 'built-twins',
  setup(b) {
    b.onResolve({ filter: /\.ts$/ }, (args) => {
      const file = path.resolve(args.resolveDir, args.path);
      return BUILT_TWINS.includes(file) ? { path: file.replace(/\.ts$/, '.built.ts') } : undefined;
    });
  },
};

rmSync(cliDir, { recursive: true, force: true });
const node = await build({
  absWorkingDir: root,
  entryPoints: {
    bandwise: 'src/cli/main.ts',
    'ingest-worker': 'ingest/worker.ts',
    'compare-worker': 'src/analysis/compare-worker.ts',
    'power-worker': 'src/analysis/power-worker.ts',
  },
  outdir: cliDir,
  // one folder for every file, so paths taken relative to a module (import.meta.url) hold for all
  chunkNames: '[name]-[hash]',
  bundle: true,
  splitting: true,
  format: 'esm',
  platform: 'node',
  target: 'node20',
  // the JavaScript of the packages is bundled: Node then reads a few files, not hundreds of small
  // CommonJS ones (each @stdlib function is a package of its own, @duckdb/node-api a file per
  // class); only the native modules (DuckDB's binding, resvg) are loaded from node_modules
  external: ['@duckdb/node-bindings', '@resvg/resvg-js'],
  // bundled CommonJS code calls require() for Node's own modules
  banner: { js: "import { createRequire as __bandwiseRequire } from 'node:module'; const require = __bandwiseRequire(import.meta.url);" },
  plugins: [builtTwins],
  metafile: true,
  logLevel: 'warning',
});

// The built code may import only Node's own modules and the runtime dependencies (never tsx,
// esbuild, vite or another development tool).
const pkg = JSON.parse(readFileSync(path.join(root, 'package.json'), 'utf8'));
const allowed = new Set([...builtinModules, ...Object.keys(pkg.dependencies)]);
const packageName = (spec) => (spec.startsWith('@') ? spec.split('/').slice(0, 2).join('/') : spec.split('/')[0]);
for (const [file, out] of Object.entries(node.metafile.outputs)) {
  for (const i of out.imports) {
    if (i.external && !i.path.startsWith('node:') && !allowed.has(packageName(i.path))) {
      throw new Error(`${file} imports ${i.path}, which is not a runtime dependency in package.json`);
    }
  }
}
chmodSync(path.join(cliDir, 'bandwise.js'), 0o755);

// configLoader 'runner': Vite reads vite.config.ts without writing a bundled copy into node_modules
// (a change there makes every later npm command in the clone re-read the whole tree)
await buildApp({ configFile: path.join(root, 'vite.config.ts'), configLoader: 'runner', logLevel: 'warn' });
console.log(`built ${path.relative(root, cliDir)}/ and dist/dashboard/`);
