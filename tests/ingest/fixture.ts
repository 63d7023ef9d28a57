/**
 * A small invented cohort for the ingest tests: EDF+C files written by src/simulation/edf-writer.ts with
 * stage annotations every 30 s, and a cohort.tsv. Signals are AR(1) background noise (a 1/f-like
 * low-pass spectrum) plus a 13.5-Hz "spindle" sine in N2, seeded, so the content is known.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { writeEdfFile, type EdfWriteSignal } from '../../src/simulation/edf-writer.ts';
import { Random } from '../../src/core/stats/random.ts';
import type { Stage } from '../../src/core/stages.ts';

export const FIXTURE_LABELS = ['EEG F3', 'EEG F4', 'EEG C3', 'EEG C4', 'EEG O1', 'EEG O2', 'EEG M1', 'EEG M2', 'EOG LOC'];

export interface FixtureRecording {
  subject: string;
  group: string;
  file: string;
  stages: Stage[];
  /** Epochs given a 900-µV spike on C3 (peak-to-peak rejection expected). */
  artifactEpochs: number[];
}

const LABEL_OF: Record<string, string> = { W: 'Sleep stage W', N1: 'Sleep stage 1', N2: 'Sleep stage 2', N3: 'Sleep stage 3', R: 'Sleep stage R' };

/** Stage sequence: W, N1, N2, N3, N2, R blocks of nEpochs/6 each (rounded). */
export function fixtureStages(nEpochs: number): Stage[] {
  const order: Stage[] = ['W', 'N1', 'N2', 'N3', 'N2', 'R'];
  return Array.from({ length: nEpochs }, (_, e) => order[Math.min(order.length - 1, Math.floor((e * order.length) / nEpochs))]);
}

export async function writeFixtureEdf(
  file: string,
  opts: { seed: number; fsHz: number; nEpochs: number; labels?: string[]; spindleUv?: number; gain?: number; artifactEpochs?: number[] },
): Promise<Stage[]> {
  const labels = opts.labels ?? FIXTURE_LABELS;
  const fs = opts.fsHz;
  const n = opts.nEpochs * 30 * fs;
  const stages = fixtureStages(opts.nEpochs);
  const rng = new Random(opts.seed);
  const common = new Float32Array(n); // shared reference-site activity
  let a = 0;
  for (let i = 0; i < n; i++) common[i] = a = 0.9 * a + 3 * rng.normal();
  const data = labels.map((label, c) => {
    const x = new Float32Array(n);
    let s = 0;
    const gain = (opts.gain ?? 1) * (1 + 0.1 * c);
    for (let i = 0; i < n; i++) {
      s = 0.95 * s + 4 * rng.normal();
      const e = Math.floor(i / (30 * fs));
      const sp = stages[e] === 'N2' && !label.startsWith('EOG') ? (opts.spindleUv ?? 10) * Math.sin((2 * Math.PI * 13.5 * i) / fs) : 0;
      x[i] = gain * s + sp + common[i];
    }
    if (label === 'EEG C3') for (const e of opts.artifactEpochs ?? []) x[e * 30 * fs + 100] += 900;
    return x;
  });
  const signals: EdfWriteSignal[] = labels.map((label) => ({
    label,
    physicalDimension: 'uV',
    physicalMin: -3200,
    physicalMax: 3200,
    samplesPerRecord: fs,
    prefilter: 'HP:0.3Hz LP:70Hz',
  }));
  await writeEdfFile(
    file,
    {
      variant: 'EDF+C',
      startDate: '2020-01-01T22:00:00',
      recordDurationS: 1,
      signals,
      annotations: stages.map((st, e) => ({ onsetS: e * 30, durationS: 30, text: LABEL_OF[st] })),
    },
    data,
  );
  return stages;
}

/** Writes `subjects` recordings and cohort.tsv into dir; returns the table path. */
export async function writeFixtureCohort(
  dir: string,
  subjects = 3,
  opts: { fsHz?: number; nEpochs?: number } = {},
): Promise<{ table: string; recordings: FixtureRecording[] }> {
  mkdirSync(dir, { recursive: true });
  const recordings: FixtureRecording[] = [];
  for (let s = 0; s < subjects; s++) {
    const subject = `s${String(s + 1).padStart(2, '0')}`;
    const file = path.join(dir, `${subject}.edf`);
    const artifactEpochs = s === 0 ? [5, 21] : [];
    const stages = await writeFixtureEdf(file, { seed: 100 + s, fsHz: opts.fsHz ?? 128, nEpochs: opts.nEpochs ?? 72, artifactEpochs });
    recordings.push({ subject, group: s % 2 === 0 ? 'control' : 'patient', file, stages, artifactEpochs });
  }
  const rows = recordings.map((r, i) => [r.subject, r.group, path.basename(r.file), String(30 + i)].join('\t'));
  const table = path.join(dir, 'cohort.tsv');
  writeFileSync(table, ['subject\tgroup\trecording\tage', ...rows].join('\n') + '\n');
  return { table, recordings };
}
