/**
 * A synthetic database (src/core/simulate/synthetic-database.ts drawn, src/simulation/synthetic-store.ts
 * written) built once into os.tmpdir()/bandwise-synthetic under a name holding its parameters
 * and a hash of the generator's code, and reused while that code is unchanged (a .done folder
 * marks a complete build). The same names as tests/bench/dashboard-scale.bench.ts uses, so the
 * benchmarks share their files.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { writeSyntheticDatabase } from '../../src/simulation/synthetic-store.ts';
import type { SyntheticCohortSpec } from '../../src/core/simulate/synthetic-database.ts';

const repo = path.resolve(import.meta.dirname, '../..');
const GENERATOR = [
  'src/core/simulate/synthetic-database.ts',
  'src/core/simulate/spectrum.ts',
  'src/simulation/synthetic-store.ts',
  'ingest/store/schema.ts',
  'ingest/store/spectra-order.ts',
  'ingest/store/database.ts',
];

function generatorHash(): string {
  const h = createHash('sha256');
  for (const f of GENERATOR) h.update(f).update(readFileSync(path.join(repo, f)));
  return h.digest('hex').slice(0, 8);
}

export interface CachedDatabase {
  file: string;
  /** wall seconds of the build; null when the file was already there */
  builtS: number | null;
  /** CPU seconds of the build (all threads of this process); null when cached */
  builtCpuS: number | null;
}

const DIR = path.join(os.tmpdir(), 'bandwise-synthetic');

function fileFor(spec: SyntheticCohortSpec): string {
  return path.join(DIR, `r${spec.recordings}-c${spec.channels.length}-s${spec.stages.length}-b${spec.nBins}-seed${spec.seed}-${generatorHash()}.duckdb`);
}

/** The file of `spec` when it is built already, else null. */
export function cachedSyntheticPath(spec: SyntheticCohortSpec): string | null {
  const file = fileFor(spec);
  return existsSync(file) && existsSync(`${file}.done`) ? file : null;
}

/** The database of `spec`, built on first use and kept. */
export async function cachedSyntheticDatabase(spec: SyntheticCohortSpec, label: string): Promise<CachedDatabase> {
  mkdirSync(DIR, { recursive: true });
  const file = fileFor(spec);
  if (cachedSyntheticPath(spec)) return { file, builtS: null, builtCpuS: null };
  rmSync(file, { force: true });
  rmSync(`${file}.wal`, { force: true });
  const cpu0 = process.cpuUsage();
  const r = await writeSyntheticDatabase(file, spec, {
    progress: (done, total) => {
      if (done % 1000 === 0 || done === total) process.stderr.write(`${label}: built ${done}/${total} recordings\n`);
    },
  });
  const cpu = process.cpuUsage(cpu0);
  mkdirSync(`${file}.done`);
  return { file, builtS: Math.round(r.totalS * 10) / 10, builtCpuS: Math.round((cpu.user + cpu.system) / 1e5) / 10 };
}
