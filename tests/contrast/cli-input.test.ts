// Bad contrast input on the command line (compare and band-check): one plain line saying what is
// wrong, no stack trace, exit status 2 (bad input, nothing read; README "compare"), before any
// database is opened (the file named does not exist).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const repo = path.resolve(import.meta.dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-cli-input-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const cli = (args: string[]) => spawnSync(process.execPath, [path.join(repo, 'bin/bandwise.mjs'), ...args], { encoding: 'utf8' });

describe('compare and band-check refuse bad contrast input with exit status 2', () => {
  const truncated = path.join(dir, 'truncated.json');
  const unknownDesign = path.join(dir, 'design.json');
  writeFileSync(truncated, '{"design": "groups",');
  writeFileSync(unknownDesign, '{"design": "nonsense"}');
  const cases: [string, string[], RegExp][] = [
    ['compare', ['--contrast', unknownDesign], /design: Invalid option: expected one of "groups"\|"paired"\|"covariate"/],
    ['compare', ['--contrast', truncated], /JSON/],
    ['compare', ['--band', '12-16'], /^invalid band '12-16' \(expected name:lo-hi in Hz, e\.g\. sigma:12-16\)$/m],
    ['band-check', ['--contrast', unknownDesign, '--band', 'sigma'], /design: Invalid option/],
  ];
  it.each(cases)('%s %j', (command, args, message) => {
    const r = cli([command, path.join(dir, 'missing.duckdb'), ...args, '--out', path.join(dir, 'out.json')]);
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at .*:\d+:\d+/); // no stack trace
  });
});
