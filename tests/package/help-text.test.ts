// `--help` of every command states each option's default once, in plain words (issue 15, "small
// things"). Commander appends "(default: <JSON.stringify of the value>)" to an option given a
// default value (commander 14, Help.optionDescription), which printed `(default: one per core)
// (default: 2)`, `(default: [])` and `(default: ["EEG"])`; the commands say the default in their
// own words instead (or pass commander a plain text for it).
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const repo = path.resolve(import.meta.dirname, '../..');
const help = (args: string[]) => {
  const r = spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8' });
  expect(r.status, r.stderr).toBe(0);
  return r.stdout;
};

const COMMANDS = [
  'ingest',
  'merge',
  'compare',
  'band-check',
  'report',
  'figure',
  'split',
  'lock',
  'confirm',
  'dashboard',
  'cluster-script',
  'simulate',
  'demo',
];

/** The option entries of a help text, each as one line (commander wraps a description onto indented lines). */
function optionEntries(text: string): string[] {
  const section = text.split(/^Options:\n/m)[1]?.split(/^\S/m)[0] ?? '';
  const entries: string[] = [];
  for (const line of section.split('\n')) {
    if (/^ {2}-/.test(line)) entries.push(line.trim());
    else if (line.trim() && entries.length) entries[entries.length - 1] += ` ${line.trim()}`;
  }
  return entries;
}

describe('help text', () => {
  it('bandwise --help lists every command with its one-line summary', () => {
    const text = help(['--help']);
    for (const c of COMMANDS) expect(text).toMatch(new RegExp(`^ {2}${c} +\\S`, 'm'));
  });

  it.each(COMMANDS)("%s --help gives each default once, in words, never as commander's JSON", (command) => {
    const text = help([command, '--help']);
    const entries = optionEntries(text);
    expect(entries.length).toBeGreaterThan(0); // at least --help
    for (const e of entries) {
      expect(e.match(/\(default\b/g)?.length ?? 0, e).toBeLessThanOrEqual(1);
      expect(e, e).not.toMatch(/\(default: (\[|"|false\)|true\))/);
    }
    // `bandwise help <command>` loads the same command
    expect(help(['help', command])).toBe(text);
  });

  it('ingest states its list and range defaults as one would type them, and names the mains frequency --mains-hz', () => {
    const entries = optionEntries(help(['ingest', '--help']));
    const entry = (flag: string) => entries.find((e) => e.startsWith(`${flag} `)) ?? '';
    expect(entry('--jobs')).toMatch(/\(default: one per core\)$/);
    expect(entry('--channel-types')).toMatch(/\(default: EEG\)$/);
    expect(entry('--reference')).toMatch(/\(default: recorded\)$/);
    expect(entry('--fit-range')).toMatch(/\(default: 1-40\)$/);
    expect(entry('--lights-off-texts')).toMatch(/\(default: Lights off,Lights out\)$/);
    expect(entry('--mains-hz')).toMatch(/50 or 60/);
    expect(entries.filter((e) => e.startsWith('--line-freq'))).toEqual([]);
  });
});
