/**
 * A small invented cohort ingested into a real database, for the tests of what the analysis
 * commands refuse: 8 recordings (4 control, 4 patient) of 5 minutes, 4 EEG channels at 128 Hz,
 * no N1 epoch anywhere (a stage with no data), participants with a numeric covariate (age), a text
 * column (site) and a constant column (scanner).
 */
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { runIngest } from '../../ingest/run.ts';
import { faultEdfBytes } from './fixture.ts';

export const LABELS = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
/** Ten 30-s epochs with every stage but N1 (N2 three times). */
export const STAGES_NO_N1 = ['W', 'W', 'N2', 'N2', 'N3', 'N3', 'N2', 'R', 'R', 'W'];
export const SUBJECTS = ['s1', 's2', 's3', 's4', 's5', 's6', 's7', 's8'];

/** Writes the recordings and cohort.tsv into dir; returns the table's path. */
export function writeAnalysisCohort(dir: string): string {
  const rows = ['subject\tgroup\trecording\tage\tsite\tscanner'];
  SUBJECTS.forEach((s, i) => {
    writeFileSync(path.join(dir, `${s}.edf`), faultEdfBytes({ labels: LABELS, seed: 300 + i, stages: STAGES_NO_N1 }));
    rows.push(`${s}\t${i % 2 ? 'patient' : 'control'}\t${s}.edf\t${30 + 3 * i}\t${i < 4 ? 'north' : 'south'}\t1`);
  });
  const table = path.join(dir, 'cohort.tsv');
  writeFileSync(table, rows.join('\n') + '\n');
  return table;
}

/** The cohort ingested (recorded reference, aperiodic fits; 3 N2 epochs are enough with min-epochs 2). */
export async function analysisDatabase(dir: string): Promise<{ db: string; table: string }> {
  const table = writeAnalysisCohort(dir);
  const db = path.join(dir, 'cohort.duckdb');
  const s = await runIngest(table, db, { jobs: 2, params: { references: ['recorded'], minEpochs: 2 } });
  if (s.failed.length > 0 || s.done !== SUBJECTS.length) throw new Error(`fixture ingest: ${JSON.stringify(s)}`);
  return { db, table };
}
