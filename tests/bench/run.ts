/**
 * Benchmark runner (`npm run bench [name…]`): runs every tests/bench/<name>.bench.ts in its own
 * Node process (so peak memory is the benchmark's own), writes bench-results/<name>.json and
 * prints all results as one JSON object. Benchmarks measure; they never fail on a time.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, '../..');
const wanted = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => wanted.length === 0 || wanted.includes(f.replace(/\.bench\.ts$/, '')))
  .sort();
if (files.length === 0) {
  console.error(`no benchmark matches ${wanted.join(', ')}`);
  process.exit(2);
}
const outDir = path.join(root, 'bench-results');
mkdirSync(outDir, { recursive: true });
const all: Record<string, unknown> = {};
for (const file of files) {
  const name = file.replace(/\.bench\.ts$/, '');
  process.stderr.write(`bench ${name} …\n`);
  const child = spawnSync(process.execPath, [path.join(root, 'bin/run-ts.mjs'), path.join(here, 'one.ts'), path.join(here, file)], {
    encoding: 'utf8',
    stdio: ['ignore', 'pipe', 'inherit'],
    maxBuffer: 64 * 1024 * 1024,
  });
  const lines = child.stdout.trim().split('\n');
  let result: unknown;
  try {
    result = child.status === 0 ? JSON.parse(lines[lines.length - 1]) : { error: `exit ${child.status}` };
  } catch {
    result = { error: 'no JSON result', output: child.stdout.slice(-2000) };
  }
  all[name] = result;
  writeFileSync(path.join(outDir, `${name}.json`), JSON.stringify(result, null, 2) + '\n');
}
const machine = { node: process.version, cpus: (await import('node:os')).cpus().length, date: new Date().toISOString() };
writeFileSync(path.join(outDir, 'all.json'), JSON.stringify({ machine, results: all }, null, 2) + '\n');
console.log(JSON.stringify({ machine, results: all }, null, 2));
