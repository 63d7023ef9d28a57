// The dependency direction of DEVELOPERS.md, checked on every import: src/core is pure (no Node
// module, nothing of the project outside src/core); the dashboard and the named queries (which
// run in the browser) import no Node module, no Node-only package and nothing of the Node side
// (ingest/, src/analysis, src/cli, src/server, src/cluster, src/simulation). Each relative import
// is resolved against its file, so a folder name that appears on both sides (the dashboard's own
// analysis/ parts) is told apart from the Node side's src/analysis.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const ROOT = path.resolve(import.meta.dirname, '../..');
const NODE_SIDE = ['ingest', 'src/analysis', 'src/cli', 'src/server', 'src/cluster', 'src/simulation'].map((d) => path.join(ROOT, d) + path.sep);

function sourceFiles(dir: string): string[] {
  return readdirSync(path.join(ROOT, dir), { recursive: true, encoding: 'utf8' })
    .filter((f) => /\.(ts|svelte)$/.test(f))
    .map((f) => path.join(ROOT, dir, f));
}

/** Every module specifier a file imports (static, re-export, side-effect and dynamic imports). */
function importsOf(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const out: string[] = [];
  for (const m of text.matchAll(
    /(?:^|[\s;])(?:import|export)\s[^'"]*?from\s*['"]([^'"]+)['"]|(?:^|[\s;])import\s*['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/gm,
  )) {
    out.push(m[1] ?? m[2] ?? m[3]);
  }
  return out;
}

/** Imports of the files under `dir` that break `rule` (a message, or null when allowed), as "file → specifier: message". */
function breaches(dir: string, rule: (spec: string, resolved: string | null) => string | null): string[] {
  const found: string[] = [];
  for (const file of sourceFiles(dir)) {
    for (const spec of importsOf(file)) {
      const resolved = spec.startsWith('.') ? path.resolve(path.dirname(file), spec) : null;
      const why = rule(spec, resolved);
      if (why) found.push(`${path.relative(ROOT, file)} → ${spec}: ${why}`);
    }
  }
  return found;
}

describe('dependency direction (DEVELOPERS.md; common practice for a pure core)', () => {
  it('finds the imports it checks (the scan is not empty)', () => {
    // a file known to import from its neighbours and from npm
    const specs = importsOf(path.join(ROOT, 'src/queries/contrast-data.ts'));
    expect(specs).toContain('./spectra.ts');
    expect(specs.some((s) => s.startsWith('../core/'))).toBe(true);
  });

  it('src/core imports no Node module and nothing of the project outside src/core', () => {
    const core = path.join(ROOT, 'src/core') + path.sep;
    expect(
      breaches('src/core', (spec, resolved) => {
        if (spec.startsWith('node:')) return 'a Node module';
        if (resolved !== null && !resolved.startsWith(core)) return 'outside src/core';
        return null;
      }),
    ).toEqual([]);
  });

  it('the dashboard and the named queries import no Node-only code', () => {
    const rule = (spec: string, resolved: string | null) => {
      if (spec.startsWith('node:') || spec === '@duckdb/node-api' || spec.startsWith('@duckdb/node-')) return 'Node-only';
      if (resolved !== null && NODE_SIDE.some((d) => resolved.startsWith(d))) return 'the Node side';
      return null;
    };
    expect([...breaches('src/dashboard', rule), ...breaches('src/queries', rule)]).toEqual([]);
  });

  it('the rule catches a breach (a Node-side path resolved from a dashboard file)', () => {
    const from = path.join(ROOT, 'src/dashboard/views/contrast');
    const resolved = path.resolve(from, '../../../analysis/compare-runner.ts');
    expect(NODE_SIDE.some((d) => resolved.startsWith(d))).toBe(true);
    // while the dashboard's own analysis/ parts are not the Node side
    expect(NODE_SIDE.some((d) => path.resolve(from, '../../analysis/defaults.ts').startsWith(d))).toBe(false);
  });
});
