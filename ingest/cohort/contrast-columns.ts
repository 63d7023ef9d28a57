/**
 * Checks that a contrast's columns exist in a cohort before any statistics run: the group
 * column, the groups named (each needs at least one recording), the covariate (must be numeric)
 * and nuisance covariates (must exist). Throws CohortError listing every problem.
 */
import type { Cohort } from './types.ts';
import { CohortError } from './types.ts';
import type { CohortProblem } from './types.ts';

export interface ContrastColumns {
  /** Default 'group' when `groups` are given. */
  groupColumn?: string;
  groups?: string[];
  covariate?: string;
  nuisance?: string[];
}

/** Recordings per group value of the group column, when one was checked. */
export interface ContrastColumnCounts {
  groupCounts: Record<string, number>;
}

export function checkContrastColumns(cohort: Cohort, spec: ContrastColumns): ContrastColumnCounts {
  const problems: CohortProblem[] = [];
  const byName = new Map(cohort.columns.map((c) => [c.name, c]));
  const known = cohort.columns.map((c) => `'${c.name}'`).join(', ') || '(none)';
  const file = cohort.root;

  const valueOf = (r: Cohort['recordings'][number], column: string) =>
    column === 'group' ? r.group : column === 'subject' ? r.subject : (r.covariates[column] ?? null);

  const groupCounts: Record<string, number> = {};
  const groupColumn = spec.groupColumn ?? (spec.groups ? 'group' : undefined);
  if (groupColumn !== undefined) {
    if (!byName.has(groupColumn)) {
      problems.push({ row: null, column: groupColumn, message: `unknown group column '${groupColumn}'; the cohort's columns are ${known}` });
    } else {
      for (const r of cohort.recordings) {
        const v = valueOf(r, groupColumn);
        if (v !== null) groupCounts[String(v)] = (groupCounts[String(v)] ?? 0) + 1;
      }
      const present =
        Object.keys(groupCounts)
          .map((g) => `'${g}'`)
          .join(', ') || '(none)';
      for (const g of spec.groups ?? []) {
        if (!groupCounts[g])
          problems.push({ row: null, column: groupColumn, message: `group '${g}' has no recordings in column '${groupColumn}' (values present: ${present})` });
      }
      if (spec.groups && new Set(spec.groups).size !== spec.groups.length) {
        problems.push({ row: null, column: groupColumn, message: `groups are named twice: ${spec.groups.join(', ')}` });
      }
    }
  }

  if (spec.covariate !== undefined) {
    const c = byName.get(spec.covariate);
    if (!c) problems.push({ row: null, column: spec.covariate, message: `unknown covariate column '${spec.covariate}'; the cohort's columns are ${known}` });
    else if (c.kind !== 'number') {
      const example = cohort.recordings.map((r) => valueOf(r, spec.covariate!)).find((v) => v !== null && typeof v !== 'number');
      problems.push({
        row: null,
        column: spec.covariate,
        message: `covariate '${spec.covariate}' is not numeric${example !== undefined ? ` (it holds values such as '${example}')` : ''}`,
      });
    }
  }
  for (const n of spec.nuisance ?? []) {
    if (!byName.has(n)) problems.push({ row: null, column: n, message: `unknown nuisance column '${n}'; the cohort's columns are ${known}` });
  }

  if (problems.length) throw new CohortError(file, problems);
  return { groupCounts };
}
