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
const cli = (args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8' });

describe('compare and band-check refuse bad contrast input with exit status 2', () => {
  const truncated = path.join(dir, 'truncated.json');
  const unknownDesign = path.join(dir, 'design.json');
  writeFileSync(truncated, '{"design": "groups",');
  writeFileSync(unknownDesign, '{"design": "nonsense"}');
  const cases: [string, string[], RegExp][] = [
    ['compare', ['--contrast', unknownDesign], /design: Invalid option: expected one of "groups"\|"paired"\|"covariate"/],
    ['compare', ['--contrast', truncated], /JSON/],
    ['band-check', ['--contrast', unknownDesign, '--band', 'sigma'], /design: Invalid option/],
  ];
  it.each(cases)('%s %j', (command, args, message) => {
    const r = cli([command, path.join(dir, 'missing.duckdb'), ...args, '--out', path.join(dir, 'out.json')]);
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at .*:\d+:\d+/); // no stack trace
  });
});

// One band grammar for both commands (README "compare": LO-HI in Hz, name:LO-HI or a preset name;
// docs/design.md's synopsis `band-check … --band LO-HI`): the same text is accepted or refused alike.
describe('compare and band-check read --band with one grammar', () => {
  const run = (command: string, band: string) =>
    cli([command, path.join(dir, 'missing.duckdb'), '--groups', 'control,patient', '--band', band, '--out', path.join(dir, 'out.json')]);
  const PRESETS = 'delta, theta, alpha, sigma, beta, broadband, slow-sigma, fast-sigma';
  const refused: [string, string][] = [
    ['sigma 11-16', `invalid band 'sigma 11-16': expected LO-HI in Hz (e.g. 12-16), name:LO-HI, or a preset: ${PRESETS}`],
    ['gamma', `invalid band 'gamma': expected LO-HI in Hz (e.g. 12-16), name:LO-HI, or a preset: ${PRESETS}`],
    ['8-4', "band '8–4 Hz': invalid edges 8–4 Hz"],
  ];
  it.each(refused)('refuses %j: exit status 2, the same one line from both', (band, message) => {
    for (const command of ['compare', 'band-check']) {
      const r = run(command, band);
      expect(r.status, `${command}: ${r.stderr}`).toBe(2);
      expect(r.stderr, command).toBe(`${message}\n`);
    }
  });
  it.each(['12-16', 'spindles:12.5-15', 'sigma'])('accepts %j: both go on to open the database', (band) => {
    for (const command of ['compare', 'band-check']) {
      const r = run(command, band);
      // past the input checks: the (missing) database is what stops them, exit status 1
      expect(r.status, `${command}: ${r.stderr}`).toBe(1);
      expect(r.stderr).toBe(`bandwise ${command}: database file not found: ${path.join(dir, 'missing.duckdb')}\n`);
    }
  });
});

// Options a command or design does not use are refused in one line with exit status 2, never
// ignored (README "compare"/"band-check"): the band check tests its own fixed measures, and a
// paired design compares every subject's two stages, so --groups would silently do nothing.
describe('options that would be ignored are refused', () => {
  const cases: [string, string[], string][] = [
    [
      'band-check',
      ['--groups', 'control,patient', '--band', 'sigma', '--measure', 'relative'],
      'bandwise band-check: --measure is not used: the band check tests its own fixed set of measures (README "band-check")\n',
    ],
    [
      'compare',
      ['--design', 'paired', '--stages', 'N2,N3', '--groups', 'control,patient'],
      'invalid contrast: groups: "groups" is used by the groups design only (a paired design compares each subject\'s two conditions; leave subjects out with exclusions)\n',
    ],
  ];
  it.each(cases)('%s %j', (command, args, message) => {
    const r = cli([command, path.join(dir, 'missing.duckdb'), ...args, '--out', path.join(dir, 'out.json')]);
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toBe(message);
  });
});
