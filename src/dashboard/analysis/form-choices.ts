// What an analysis form offers, read from the open database: the participants columns (text ones
// with their values, numeric ones) and the stages, references and averagings spectra are stored for.
import type { SqlClient } from '../../queries/client.ts';
import { participants } from '../../queries/cohort.ts';
import { spectraChoices } from '../../queries/quality.ts';
import type { CohortSchema } from '../../queries/schema.ts';

export interface FormChoices {
  /** participants columns: text ones with their values, numeric ones */
  textColumns: Map<string, string[]>;
  numericColumns: string[];
  stages: string[];
  references: string[];
  averagings: string[];
}

export async function loadChoices(db: SqlClient, schema: CohortSchema): Promise<FormChoices> {
  const p = await participants(db, schema);
  const textColumns = new Map<string, string[]>();
  const numericColumns: string[] = [];
  for (const c of p.columns) {
    if (c.name === 'subject') continue;
    const values = p.rows.map((r) => r[c.name]).filter((v) => v !== null);
    if (values.every((v) => typeof v === 'number')) numericColumns.push(c.name);
    else textColumns.set(c.name, [...new Set(values.map(String))].sort());
  }
  const combos = await spectraChoices(db);
  const uniq = (k: 'stage' | 'reference' | 'averaging') => [...new Set(combos.map((c) => c[k]))];
  return { textColumns, numericColumns, stages: uniq('stage'), references: uniq('reference'), averagings: uniq('averaging') };
}
