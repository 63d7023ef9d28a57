import { rmSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { checkContrastColumns } from '../../ingest/cohort/contrast-columns.ts';
import { readCohortTable } from '../../ingest/cohort/table.ts';
import { cohortError, tempFolder } from './fixtures.ts';

const { dir, put } = tempFolder('bw-cohort-contrast-');
afterAll(() => rmSync(dir, { recursive: true, force: true }));
for (const f of ['a.edf', 'b.edf', 'c.edf']) put(f, 'x');
const tablePath = put(
  'c.tsv',
  'subject\tgroup\trecording\tage\tsex\tarm\nS1\tcontrol\ta.edf\t30\tF\tx\nS2\tpatient\tb.edf\t41\tM\ty\nS3\tpatient\tc.edf\tn/a\tF\tx\n',
);

describe('checkContrastColumns', () => {
  it('counts recordings per group for a valid contrast', async () => {
    const c = await readCohortTable(tablePath);
    expect(checkContrastColumns(c, { groups: ['control', 'patient'], covariate: 'age', nuisance: ['sex'] })).toEqual({
      groupCounts: { control: 1, patient: 2 },
    });
    expect(checkContrastColumns(c, { groupColumn: 'arm', groups: ['x', 'y'] })).toEqual({ groupCounts: { x: 2, y: 1 } });
  });

  it('names unknown columns, empty groups, non-numeric covariates', async () => {
    const c = await readCohortTable(tablePath);
    const e = await cohortError(() => checkContrastColumns(c, { groupColumn: 'grp', groups: ['a'], covariate: 'weight', nuisance: ['site'] }));
    expect(e.problems.map((p) => [p.column, p.message])).toEqual([
      ['grp', "unknown group column 'grp'; the cohort's columns are 'subject', 'group', 'age', 'sex', 'arm'"],
      ['weight', "unknown covariate column 'weight'; the cohort's columns are 'subject', 'group', 'age', 'sex', 'arm'"],
      ['site', "unknown nuisance column 'site'; the cohort's columns are 'subject', 'group', 'age', 'sex', 'arm'"],
    ]);
    const g = await cohortError(() => checkContrastColumns(c, { groups: ['control', 'patients'], covariate: 'sex' }));
    expect(g.problems.map((p) => p.message)).toEqual([
      "group 'patients' has no recordings in column 'group' (values present: 'control', 'patient')",
      "covariate 'sex' is not numeric (it holds values such as 'F')",
    ]);
    const twice = await cohortError(() => checkContrastColumns(c, { groups: ['control', 'control'] }));
    expect(twice.message).toContain('groups are named twice: control, control');
  });
});
