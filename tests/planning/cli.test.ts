// `bandwise power` and `bandwise deviation` as installed commands, on a small synthetic database
// (src/simulation/synthetic-store.ts: 40 recordings, 4 channels, N2): the files they write, the
// parameters recorded, and one plain line with exit status 2 for bad input (nothing read) or 1
// for what the data cannot serve (README "power", "deviation").
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticSpec } from '../../src/core/simulate/synthetic-database.ts';
import { writeSyntheticDatabase } from '../../src/simulation/synthetic-store.ts';

const repo = path.resolve(import.meta.dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-planning-cli-'));
const db = path.join(dir, 'cohort.duckdb');
const cli = (args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8' });
const contrast = (name: string, json: object) => {
  const file = path.join(dir, name);
  writeFileSync(file, JSON.stringify(json));
  return file;
};
const noTrace = /\n\s+at .*:\d+:\d+/;

beforeAll(async () => {
  await writeSyntheticDatabase(db, syntheticSpec({ recordings: 40, channelCount: 4, stages: ['N2'], seed: 6 }));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('bandwise power', () => {
  const logPsd = contrast('log-psd.json', { design: 'groups', groups: ['control', 'patient'], stage: 'N2', fminHz: 8, fmaxHz: 16, permutations: 50 });

  it('writes the curve as JSON and TSV with every parameter; a negative effect reads as a number', () => {
    const out = path.join(dir, 'power.json');
    const tsv = path.join(dir, 'power.tsv');
    const r = cli([
      'power',
      db,
      '--contrast',
      logPsd,
      '--reference-group',
      'control',
      '--effect',
      '-0.2',
      '--band',
      '10-14',
      '--channels',
      'Fp1,Fpz',
      '--n',
      '5,10',
      '--simulations',
      '6',
      '--seed',
      '3',
      '--out',
      out,
      '--tsv',
      tsv,
      '--quiet',
    ]);
    expect(r.status, r.stderr).toBe(0);
    const j = JSON.parse(readFileSync(out, 'utf8'));
    expect(j).toMatchObject({
      kind: 'power',
      referenceGroup: 'control',
      effect: -0.2,
      effectUnit: 'log10',
      band: { loHz: 10, hiHz: 14 },
      plantedChannels: ['Fp1', 'Fpz'],
      simulations: 6,
      seed: 3,
      alpha: 0.05,
      contrast: { permutations: 50, correction: 'cluster-mass' },
    });
    expect(j.referenceSubjects).toHaveLength(20);
    expect(j.curve.map((p: { nPerGroup: number; simulations: number }) => [p.nPerGroup, p.simulations])).toEqual([
      [5, 6],
      [10, 6],
    ]);
    expect(j.method.interval).toBe('Clopper–Pearson exact 95 % interval of the share found');
    expect(j.note).toMatch(/research tool/);
    const lines = readFileSync(tsv, 'utf8').trim().split('\n');
    expect(lines[0]).toBe('n_per_group\tpower\tci_low\tci_high\tsimulations\tfound\tany_significant');
    expect(lines.slice(1).map((l) => l.split('\t')[0])).toEqual(['5', '10']);
    expect(r.stdout).toMatch(/^n = 5 per group: power \d\.\d{3} \[\d\.\d{3}, \d\.\d{3}\]$/m);
  });

  const refused: [string, string[], number, string][] = [
    [
      'a measure without a planting rule',
      ['--contrast', contrast('peak.json', { design: 'groups', groups: ['control', 'patient'], measure: 'peak-height', bands: ['sigma'] }), '--band', '12-16'],
      2,
      'bandwise power: measure peak-height takes no planted effect; use log-psd, relative, residual, band-power, relative-band-power, offset, exponent',
    ],
    [
      'a band for the offset',
      ['--contrast', contrast('offset.json', { design: 'groups', groups: ['control', 'patient'], measure: 'offset' }), '--band', '12-16'],
      2,
      'bandwise power: measure offset has no frequency axis: give no band',
    ],
    ['no band for log-psd', ['--contrast', logPsd], 2, 'bandwise power: measure log-psd needs the band to plant the effect in (--band LO-HI)'],
    [
      'a covariate design',
      ['--contrast', contrast('cov.json', { design: 'covariate', covariate: 'age' }), '--band', '12-16'],
      2,
      'bandwise power: power simulates two groups: the contrast must be a groups design, not covariate',
    ],
    [
      'a planted channel the contrast lacks',
      ['--contrast', logPsd, '--band', '12-16', '--channels', 'Oz'],
      1,
      "bandwise power: channel Oz is not one of the contrast's channels (AF7, Fp1, Fp2, Fpz)",
    ],
    [
      'an unknown reference group',
      ['--contrast', logPsd, '--band', '12-16', '--reference-group', 'nobody'],
      1,
      "bandwise power: no subject has group 'nobody'; its values are: control, patient",
    ],
  ];
  it.each(refused)('refuses %s in one line (exit status %#)', (_what, args, status, message) => {
    const base = [
      'power',
      db,
      '--reference-group',
      'control',
      '--effect',
      '0.1',
      '--n',
      '5',
      '--simulations',
      '2',
      '--out',
      path.join(dir, 'x.json'),
      '--quiet',
    ];
    const r = cli([...base, ...args]);
    expect(r.status, r.stderr).toBe(status);
    expect(r.stderr).toBe(`${message}\n`);
    expect(r.stderr).not.toMatch(noTrace);
  });
});

describe('bandwise deviation', () => {
  it("writes every subject's z map and the summaries", () => {
    const out = path.join(dir, 'deviation.json');
    const tsv = path.join(dir, 'deviation.tsv');
    const r = cli([
      'deviation',
      db,
      '--reference-group',
      'control',
      '--stage',
      'N2',
      '--measure',
      'log-psd',
      '--covariates',
      'age',
      '--fmin',
      '4',
      '--fmax',
      '20',
      '--out',
      out,
      '--tsv',
      tsv,
    ]);
    expect(r.status, r.stderr).toBe(0);
    const j = JSON.parse(readFileSync(out, 'utf8'));
    expect(j.kind).toBe('deviation');
    expect(j.channels).toEqual(['AF7', 'Fp1', 'Fp2', 'Fpz']); // as the database returns them
    expect(j.freqsHz[0]).toBe(4);
    expect(j.freqsHz.at(-1)).toBe(20);
    expect(j.subjects).toHaveLength(40);
    expect(j.subjects[0].z).toHaveLength(4);
    expect(j.subjects[0].z[0]).toHaveLength(j.freqsHz.length);
    expect(j.reference).toMatchObject({ group: 'control', n: 20 });
    expect(j.modelColumns).toEqual(['intercept', 'age']);
    expect(j.groups.map((g: { group: string; n: number }) => [g.group, g.n])).toEqual([
      ['control', 20],
      ['patient', 20],
    ]);
    expect(j.note).toMatch(/an individual deviation is not a clinical finding/);
    expect(readFileSync(tsv, 'utf8').split('\n')[0]).toBe('subject\tgroup\treference\tshare_beyond_2\texpected_share\tmean_z');
  });

  it('refuses a covariate the participants table lacks (exit 1) and bad settings (exit 2), in one line', () => {
    const base = ['deviation', db, '--reference-group', 'control', '--out', path.join(dir, 'x.json')];
    let r = cli([...base, '--covariates', 'height']);
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toBe('bandwise deviation: the participants table has no column height\n');
    r = cli([...base, '--fmin', '30', '--fmax', '10']);
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/fmaxHz \(10\) must exceed fminHz \(30\)/);
    expect(r.stderr).not.toMatch(noTrace);
  });
});
