// One band grammar (README "The contrast" and "compare"): a band written as LO-HI, name:LO-HI, a
// preset name, or {name, loHz, hiHz} in the contrast JSON is the same band to compare and
// band-check on the demo cohort; only the band's name differs. Sigma is 12–16 Hz (common
// practice in sleep EEG, src/core/spectrum/bands.ts). Sized small: 100 permutations, N2, the six
// channels of the planted spindle change (demo-cohort/scenario.json).
import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoDatabase } from '../helpers/demo-db.ts';

// the command from its sources (bin/run-ts.mjs runs src/cli/main.ts through tsx)
const bin = path.join(import.meta.dirname, '..', '..', 'bin', 'run-ts.mjs');
const main = path.join(import.meta.dirname, '..', '..', 'src', 'cli', 'main.ts');
const common = [
  '--groups',
  'control,patient',
  '--stage',
  'N2',
  '--channels',
  'C3,C4,Cz,P3,P4,Pz',
  '--permutations',
  '100',
  '--seed',
  '1',
  '--quiet',
  '--no-ledger',
];
let db = '';
let dir = '';

beforeAll(async () => {
  db = await demoDatabase();
  dir = mkdtempSync(path.join(tmpdir(), 'bw-band-grammar-'));
}, 1_800_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Written {
  contrast: { bands?: { name: string; loHz: number; hiHz: number }[] };
  band?: { name: string; loHz: number; hiHz: number };
  statistics?: { stat: number[] };
  clusters?: unknown[];
  verdict?: string;
  tests?: unknown;
  p?: number;
}

async function run(command: string, name: string, args: string[]): Promise<Written> {
  const out = path.join(dir, `${name}.json`);
  await promisify(execFile)(process.execPath, [bin, main, command, db, ...common, ...args, '--out', out]);
  return JSON.parse(readFileSync(out, 'utf8')) as Written;
}

function contrastFile(name: string, bands: unknown[]): string {
  const file = path.join(dir, `${name}.contrast.json`);
  writeFileSync(file, JSON.stringify({ design: 'groups', measure: 'band-power', bands }));
  return file;
}

describe('one band grammar on the demo cohort', () => {
  it('compare: --band 12-16, --band sigma and the contrast JSON (text or object) give the same band-power statistics', async () => {
    const plain = await run('compare', 'lo-hi', ['--measure', 'band-power', '--band', '12-16']);
    const preset = await run('compare', 'preset', ['--measure', 'band-power', '--band', 'sigma']);
    const text = await run('compare', 'json-text', ['--contrast', contrastFile('text', ['sigma:12-16'])]);
    const object = await run('compare', 'json-object', ['--contrast', contrastFile('object', [{ name: 'sigma', loHz: 12, hiHz: 16 }])]);
    expect(plain.contrast.bands).toEqual([{ name: '12–16 Hz', loHz: 12, hiHz: 16 }]);
    for (const r of [preset, text, object]) expect(r.contrast.bands).toEqual([{ name: 'sigma', loHz: 12, hiHz: 16 }]);
    expect(plain.statistics!.stat.length).toBe(6); // one band-power value per channel
    for (const r of [preset, text, object]) {
      expect(r.statistics!.stat).toEqual(plain.statistics!.stat);
      expect(r.clusters).toEqual(plain.clusters);
    }
  }, 300_000);

  it('band-check: --band 12-16 and --band sigma give the same tests and verdict', async () => {
    const plain = await run('band-check', 'check-lo-hi', ['--band', '12-16']);
    const preset = await run('band-check', 'check-preset', ['--band', 'sigma']);
    expect(plain.band).toEqual({ name: '12–16 Hz', loHz: 12, hiHz: 16 });
    expect(preset.band).toEqual({ name: 'sigma', loHz: 12, hiHz: 16 });
    expect(preset.verdict).toBe(plain.verdict);
    expect(preset.p).toBe(plain.p);
    // every number alike; the tests' measure texts name the band, so they differ by the name only
    const numbers = (r: Written) => JSON.parse(JSON.stringify(r.tests, (k, v) => (k === 'measure' ? undefined : v)));
    expect(numbers(preset)).toEqual(numbers(plain));
    expect(JSON.stringify(preset.tests).replaceAll('sigma 12–16 Hz', '12–16 Hz 12–16 Hz')).toBe(JSON.stringify(plain.tests));
  }, 300_000);
});
