// Categorical nuisance covariates (src/core/contrast/nuisance-coding.ts): sex with levels F, M is
// one indicator column (M against F); the linear-model t of the group at every point equals the
// OLS t of numpy.linalg.lstsq with [1, group, sex=M] on the same log10 PSD (24 invented subjects,
// 2 channels, 10–12 Hz in 0.5-Hz bins, 20 permutations: the statistic does not depend on them).
// On the command line: a categorical covariate runs; a constant or collinear one is refused in
// one line naming it, never a stack trace.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { syntheticSpec } from '../../src/core/simulate/synthetic-database.ts';
import { writeSyntheticDatabase } from '../../src/simulation/synthetic-store.ts';
import { syntheticCohort } from '../confirmation/synthetic-cohort.ts';
import { runPython } from '../helpers/python.ts';

describe('a categorical nuisance covariate', () => {
  it('is dummy-coded: the group t equals numpy OLS with an indicator column for sex', () => {
    const data = syntheticCohort(24, 11, { offsetLog10: 0.1, exponent: 0, sigmaHeightLog10: 0 });
    const sexOf = (i: number) => (i % 3 === 0 ? 'M' : 'F');
    data.participants = data.participants.map((p, i) => ({ ...p, sex: sexOf(i) }));
    const c = parseContrast({
      design: 'groups',
      groups: ['control', 'patient'],
      stage: 'N2',
      fminHz: 10,
      fmaxHz: 12,
      nuisance: ['sex'],
      permutations: 20,
      seed: 2,
    });
    const r = compare(c, data);
    expect(r.statistics.statistic).toBe('linear-model-t');
    const subjects = [...data.participants].sort((a, b) => String(a.subject).localeCompare(String(b.subject)));
    const bins = [20, 21, 22, 23, 24]; // 10–12 Hz at 0.5 Hz from 0 Hz
    const y = r.statistics.channels.map((ch) =>
      subjects.map((p) => Array.from(bins, (b) => Math.log10(data.spectra.rows.find((row) => row.subject === p.subject && row.channel === ch)!.power[b]))),
    );
    const expected = runPython<number[]>(
      `y = numpy.array(${JSON.stringify(y)})  # channels x subjects x bins\n` +
        `g = numpy.array(${JSON.stringify(subjects.map((p) => (p.group === 'patient' ? 1 : 0)))})\n` +
        `m = numpy.array(${JSON.stringify(subjects.map((p) => (p.sex === 'M' ? 1 : 0)))})\n` +
        'X = numpy.column_stack([numpy.ones(len(g)), g, m])\nout = []\n' +
        'for c in range(y.shape[0]):\n  for b in range(y.shape[2]):\n' +
        '    beta, res, rank, sv = numpy.linalg.lstsq(X, y[c, :, b], rcond=None)\n' +
        '    e = y[c, :, b] - X @ beta\n    s2 = e @ e / (len(g) - 3)\n' +
        '    out.append(float(beta[1] / numpy.sqrt(s2 * numpy.linalg.inv(X.T @ X)[1, 1])))\n' +
        'print(json.dumps(out))',
    );
    expect(r.statistics.stat).toHaveLength(expected.length);
    r.statistics.stat.forEach((t, i) => expect(t).toBeCloseTo(expected[i], 6));
  });
});

describe('nuisance covariates on the command line', () => {
  const repo = path.resolve(import.meta.dirname, '../..');
  const dir = mkdtempSync(path.join(tmpdir(), 'bw-nuisance-'));
  const db = path.join(dir, 'cohort.duckdb');
  const cli = (args: string[]) =>
    spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8' });
  const run = (nuisance: string) =>
    cli([
      'compare',
      db,
      '--design',
      'groups',
      '--groups',
      'control,patient',
      '--stage',
      'N2',
      '--fmin',
      '8',
      '--fmax',
      '16',
      '--permutations',
      '20',
      '--nuisance',
      nuisance,
      '--out',
      path.join(dir, 'r.json'),
      '--no-ledger',
      '--quiet',
    ]);

  beforeAll(async () => {
    await writeSyntheticDatabase(db, syntheticSpec({ recordings: 20, channelCount: 4, stages: ['N2'], seed: 5 }));
    const inst = await DuckDBInstance.create(db);
    const con = await inst.connect();
    await con.run(`ALTER TABLE participants ADD COLUMN sex VARCHAR; UPDATE participants SET sex = CASE WHEN hash(subject) % 2 = 0 THEN 'F' ELSE 'M' END`);
    await con.run(`ALTER TABLE participants ADD COLUMN site VARCHAR; UPDATE participants SET site = 'A'`);
    await con.run(`ALTER TABLE participants ADD COLUMN age_months DOUBLE; UPDATE participants SET age_months = 12 * age`);
    con.closeSync();
    inst.closeSync();
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('runs with sex as a nuisance covariate (it said "at least 3 subjects are needed" or refused text before)', () => {
    const r = run('sex,age');
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('adjusted for sex');
  });

  it('refuses a covariate with one level, a collinear covariate and a collinear group in one line each', () => {
    const noTrace = /\n\s+at .*:\d+:\d+/;
    for (const [nuisance, message] of [
      ['site', 'bandwise compare: nuisance covariate site has the same value (A) for all 20 subjects: it cannot be adjusted for; leave it out\n'],
      [
        'age,age_months',
        'bandwise compare: nuisance covariate age_months is collinear with the intercept and age over the 20 subjects: it cannot be adjusted for; leave it out\n',
      ],
      [
        'group',
        'bandwise compare: the group (group) is collinear with the nuisance covariates (group) over the 20 subjects: no effect is left to test; leave them out\n',
      ],
    ]) {
      const r = run(nuisance);
      expect(r.status, nuisance).toBe(1);
      expect(r.stderr).toBe(message);
      expect(r.stderr).not.toMatch(noTrace);
    }
  });
});
