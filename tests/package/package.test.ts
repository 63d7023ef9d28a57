// The package as a user gets it (issue 15: "another local user can plant code that runs as you";
// "one command on a fresh machine"). `npm pack` runs the prepare script, which builds dist/
// (bin/build.mjs); what the tarball holds is read from npm's own account of it (`npm pack --json`,
// npm-pack(1)), and the tarball is installed into an empty folder by npm (npm-install(1), its
// dependencies from the registry) and run there. Nothing may compile TypeScript at run time: tsx
// keeps compiled code in a cache under the system temporary folder (tsx-<uid>, its own
// documented behaviour; STACK.md "Seen this round"), so every command here runs with TMPDIR set to
// an empty folder, which must stay empty. The first check shows that the sources' tsx path does
// write that cache, so the check can fail.
import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { copyFileSync, existsSync, linkSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { builtinModules } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoRecordings } from '../helpers/demo-db.ts';
import { writeSmallCohort } from '../scale/helpers.ts';

const repo = path.resolve(import.meta.dirname, '../..');
const work = mkdtempSync(path.join(tmpdir(), 'bw-package-'));
const at = (...p: string[]) => path.join(work, ...p);
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** The environment of a user's shell: without what vitest sets (NODE_ENV=test would make Vite build a development app). */
function userEnv(tmp: string): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = { ...process.env, TMPDIR: tmp };
  for (const k of Object.keys(env)) if (k.startsWith('VITEST') || k === 'NODE_ENV' || k === 'TEST') delete env[k];
  return env;
}

function run(command: string, args: string[], cwd: string, tmp: string): SpawnSyncReturns<string> {
  return spawnSync(command, args, { cwd, env: userEnv(tmp), encoding: 'utf8', maxBuffer: 1 << 26 });
}

/** A fresh, empty folder to serve as the system temporary folder of one run. */
function emptyTmp(name: string): string {
  const dir = at(name);
  mkdirSync(dir);
  return dir;
}

let packed: string[] = [];
let tarball = '';

beforeAll(() => {
  const r = run('npm', ['pack', '--json', '--pack-destination', work], repo, tmpdir());
  if (r.status !== 0) throw new Error(`npm pack failed (${r.status}): ${r.stderr.slice(-3000)}`);
  // the prepare script's own output comes before npm's JSON report
  const report = JSON.parse(r.stdout.slice(r.stdout.indexOf('[\n'))) as { filename: string; files: { path: string }[] }[];
  tarball = at(report[0].filename);
  packed = report[0].files.map((f) => f.path).sort();
}, 600_000);

describe('the package', () => {
  it('the sources through tsx write a compiler cache into the temporary folder (what the checks below look for)', () => {
    const tmp = emptyTmp('tmp-sources');
    const r = run(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), '--help'], repo, tmp);
    expect(r.status, r.stderr).toBe(0);
    expect(readdirSync(tmp).filter((f) => f.startsWith('tsx-'))).toHaveLength(1);
  });

  it('the tarball holds the built command, its two workers, the app, the demo scenario and the README, and no sources', () => {
    for (const f of [
      'package.json',
      'README.md',
      'dist/cli/bandwise.js',
      'dist/cli/ingest-worker.js',
      'dist/cli/compare-worker.js',
      'dist/dashboard/index.html',
      'demo-cohort/scenario.json',
      'demo-cohort/participants.tsv',
    ]) {
      expect(packed).toContain(f);
    }
    const expected = /^(dist\/cli\/[\w.-]+\.js|dist\/dashboard\/.+|demo-cohort\/(scenario\.json|participants\.tsv)|package\.json|README\.md)$/;
    expect(packed.filter((f) => !expected.test(f))).toEqual([]);
    expect(packed.filter((f) => f.endsWith('.ts'))).toEqual([]);
  });

  it("the built command imports only Node's own modules and the runtime dependencies: no tsx, esbuild or vite", () => {
    const pkg = JSON.parse(readFileSync(path.join(repo, 'package.json'), 'utf8')) as {
      dependencies: Record<string, string>;
      devDependencies: Record<string, string>;
      bin: Record<string, string>;
    };
    expect(pkg.bin.bandwise).toBe('dist/cli/bandwise.js');
    for (const tool of ['tsx', 'esbuild', 'vite']) {
      expect(pkg.dependencies[tool]).toBeUndefined();
      expect(pkg.devDependencies[tool]).toBeDefined();
    }
    const packageOf = (s: string) => (s.startsWith('@') ? s.split('/').slice(0, 2).join('/') : s.split('/')[0]);
    const specifiers = new Set<string>();
    const files = packed.filter((f) => f.startsWith('dist/cli/'));
    expect(files.length).toBeGreaterThan(3);
    for (const f of files) {
      const text = readFileSync(path.join(repo, f), 'utf8');
      // static imports and re-exports (statements at a line's start in esbuild's unminified output), import(), require();
      // SQL text in the bundle ("… from 'recordings'") is not an import
      const imports =
        /^\s*(?:import|export)\s[^'"\n]*?from\s*["']([^"'\n]+)["']|^\s*import\s*["']([^"'\n]+)["']|\bimport\(\s*["']([^"'\n]+)["']\s*\)|\brequire\(\s*["']([^"'\n]+)["']\s*\)/gm;
      for (const m of text.matchAll(imports)) specifiers.add(m[1] ?? m[2] ?? m[3] ?? m[4]);
    }
    const bare = [...specifiers].filter((s) => !s.startsWith('.'));
    // the packages' JavaScript is bundled (bin/build.mjs); the native modules (DuckDB's binding, the PNG rasteriser) are loaded from node_modules
    expect(bare).toContain('@duckdb/node-bindings');
    expect(bare).toContain('@resvg/resvg-js');
    expect(bare.filter((s) => ['tsx', 'esbuild', 'vite'].includes(packageOf(s)))).toEqual([]);
    expect(bare.filter((s) => !s.startsWith('node:') && !builtinModules.includes(s) && !(packageOf(s) in pkg.dependencies))).toEqual([]);
  });

  it('runs from dist/ without writing to the temporary folder: --help, an ingest on two workers, a compare on two threads', async () => {
    const cohort = await writeSmallCohort(at('cohort'), 8, 60);
    const tmp = emptyTmp('tmp-built');
    const cli = (args: string[]) => run(process.execPath, [path.join(repo, 'dist/cli/bandwise.js'), ...args], work, tmp);
    const help = cli(['--help']);
    expect(help.status, help.stderr).toBe(0);
    expect(help.stdout).toMatch(/^ {2}ingest\b/m);
    const db = at('cohort.duckdb');
    const ingest = cli(['ingest', cohort, '--out', db, '--jobs', '2', '--no-fit']);
    expect(ingest.status, ingest.stderr + ingest.stdout).toBe(0);
    expect(ingest.stdout).toMatch(/8 done, 0 already stored/);
    const compare = cli(['compare', db, '--groups', 'control,patient', '--permutations', '200', '--threads', '2', '--out', at('result.json'), '--no-ledger']);
    expect(compare.status, compare.stderr + compare.stdout).toBe(0);
    expect(JSON.parse(readFileSync(at('result.json'), 'utf8')).n).toEqual({ control: 4, patient: 4 });
    // the PNG figure loads resvg's native module from node_modules: 100 mm at 150 dpi = 590.55 → 591 pixels wide (PNG IHDR width, bytes 16–19)
    const figure = cli(['figure', at('result.json'), '--out', at('figure.png'), '--width-mm', '100', '--height-mm', '90', '--dpi', '150']);
    expect(figure.status, figure.stderr).toBe(0);
    expect(readFileSync(at('figure.png')).readUInt32BE(16)).toBe(591);
    expect(readdirSync(tmp)).toEqual([]);
  }, 300_000);

  it('installs from the tarball into an empty folder; there `bandwise --help` and `bandwise demo --no-dashboard` run', async () => {
    const app = at('app');
    mkdirSync(app);
    const install = run('npm', ['install', '--no-audit', '--no-fund', tarball], app, tmpdir());
    expect(install.status, install.stderr.slice(-3000)).toBe(0);
    const tmp = emptyTmp('tmp-installed');
    const help = run('npx', ['--no', '--', 'bandwise', '--help'], app, tmp);
    expect(help.status, help.stderr).toBe(0);
    expect(help.stdout).toMatch(/^ {2}demo\b/m);

    // The demo's recordings are the ones the other tests generate (same scenario, same generator):
    // linked in, so this test spends its time on the installed ingest and analyses, not on
    // generating 36 nights again; the installed demo checks them against its own scenario file.
    const installed = path.join(app, 'node_modules', 'bandwise', 'demo-cohort');
    const source = await demoRecordings();
    mkdirSync(path.join(installed, 'recordings'));
    for (const f of readdirSync(source)) {
      try {
        linkSync(path.join(source, f), path.join(installed, 'recordings', f));
      } catch {
        copyFileSync(path.join(source, f), path.join(installed, 'recordings', f));
      }
    }
    const demo = run('npx', ['--no', '--', 'bandwise', 'demo', '--no-dashboard'], app, tmp);
    expect(demo.status, demo.stderr + demo.stdout).toBe(0);
    expect(demo.stdout).toMatch(/demo recordings up to date \(36\)/);
    expect(demo.stdout).toMatch(/ingest: 36 done, 0 already stored, 0 failed/);
    // demo-cohort/scenario.json plants a broadband aperiodic offset (theta) and a fast-spindle
    // reduction over C3 C4 Cz P3 P4 Pz (sigma); README "On the demo" gives these verdicts
    expect(demo.stdout).toMatch(/band check, N2 theta 4–8 Hz, all channels averaged: broadband-offset/);
    expect(demo.stdout).toMatch(/band check, N2 sigma 12–16 Hz, C3 C4 Cz P3 P4 Pz averaged: band-specific/);
    for (const f of ['n2-log-psd.json', 'n2-residual.json', 'n2-theta-band-check.json', 'n2-sigma-band-check.json', 'n2-sigma-band-check-methods.md']) {
      expect(existsSync(path.join(installed, 'results', f)), f).toBe(true);
    }
    expect(readdirSync(tmp)).toEqual([]);
  }, 1_800_000);
});
