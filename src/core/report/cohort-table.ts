/**
 * A "Table 1" of a cohort by group: n, then each characteristic as mean (SD) for numbers (sample
 * standard deviation, n − 1; common practice) or n (%) per level for categories, per group and
 * for all subjects. Pure; `bandwise cohort-table` fills it from the database and writes it as TSV.
 */

export interface Characteristic {
  /** key in each subject's values */
  key: string;
  /** row label with its unit, e.g. "age" or "total sleep time (min)" */
  label: string;
  kind: 'numeric' | 'categorical';
}

export interface CohortSubject {
  /** null: in no group (counted under "all" only) */
  group: string | null;
  values: Record<string, number | string | null>;
}

export interface CohortTable {
  /** "characteristic", the groups in order, "all" */
  header: string[];
  rows: string[][];
}

/** mean (SD) of the values with one decimal, "–" when none, the count in brackets when some are missing. */
function meanSd(values: (number | string | null)[]): string {
  const x = values.filter((v): v is number => typeof v === 'number' && Number.isFinite(v));
  if (x.length === 0) return '–';
  let sum = 0;
  for (const v of x) sum += v;
  const mean = sum / x.length;
  // sample variance: Σ(x − mean)² / (n − 1)
  let ss = 0;
  for (const v of x) ss += (v - mean) ** 2;
  const sd = x.length > 1 ? Math.sqrt(ss / (x.length - 1)) : NaN;
  const text = `${mean.toFixed(1)} (${Number.isNaN(sd) ? '–' : sd.toFixed(1)})`;
  return x.length < values.length ? `${text} [n = ${x.length}]` : text;
}

export function cohortTable(subjects: readonly CohortSubject[], characteristics: readonly Characteristic[]): CohortTable {
  const groups = [...new Set(subjects.map((s) => s.group).filter((g): g is string => g !== null))].sort();
  const columns = [...groups.map((g) => subjects.filter((s) => s.group === g)), [...subjects]];
  const rows: string[][] = [['n', ...columns.map((c) => String(c.length))]];
  for (const ch of characteristics) {
    if (ch.kind === 'numeric') {
      rows.push([`${ch.label}, mean (SD)`, ...columns.map((c) => meanSd(c.map((s) => s.values[ch.key] ?? null)))]);
      continue;
    }
    const levels = [
      ...new Set(
        subjects
          .map((s) => s.values[ch.key])
          .filter((v) => v !== null && v !== undefined)
          .map(String),
      ),
    ].sort();
    for (const level of levels) {
      rows.push([
        `${ch.label} = ${level}, n (%)`,
        ...columns.map((c) => {
          const k = c.filter((s) => s.values[ch.key] !== null && String(s.values[ch.key]) === level).length;
          return c.length === 0 ? '–' : `${k} (${((100 * k) / c.length).toFixed(1)} %)`;
        }),
      ]);
    }
  }
  return { header: ['characteristic', ...groups, 'all'], rows };
}

export function cohortTableTsv(t: CohortTable): string {
  const clean = (s: string) => s.replace(/[\t\r\n]+/g, ' ');
  return [t.header, ...t.rows].map((r) => r.map(clean).join('\t')).join('\n') + '\n';
}
