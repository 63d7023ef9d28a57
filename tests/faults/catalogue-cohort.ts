/**
 * The ingest fault catalogue as one cohort: four good recordings and one bad input per case,
 * each a real file (or a real folder / FIFO / unreadable file) named in cohort.tsv.
 */
import { execFileSync } from 'node:child_process';
import { chmodSync, copyFileSync, mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { faultEdfBytes, headerBytesFor, STAGES_10, type FaultRecording } from './fixture.ts';

const WITH_MASTOIDS = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];

export const GOOD = ['g01', 'g02', 'g03', 'g04'];

/** One cohort row: subject, recording file, scoring file (or ''). */
interface Row {
  subject: string;
  recording: string;
  scoring: string;
}

/**
 * Writes the catalogue into dir (cohort.tsv plus files). With `permissionCase` a recording
 * readable by nobody but its owner (mode 000) is added: only a child running as another,
 * unprivileged user is denied (root reads it anyway).
 */
export function writeCatalogueCohort(dir: string, opts: { permissionCase: boolean }): { table: string } {
  mkdirSync(dir, { recursive: true });
  const rows: Row[] = [];
  const put = (name: string, bytes: Uint8Array | string) => writeFileSync(path.join(dir, name), bytes);
  const edf = (name: string, spec: FaultRecording, edit?: Parameters<typeof faultEdfBytes>[1]) => put(name, faultEdfBytes(spec, edit));
  GOOD.forEach((s, i) => {
    edf(`${s}.edf`, { labels: WITH_MASTOIDS, seed: 10 + i });
    rows.push({ subject: s, recording: `${s}.edf`, scoring: '' });
  });
  const bad = (subject: string, recording: string, scoring = '') => rows.push({ subject, recording, scoring });

  // truncated: cut inside the signal headers (EDF 1992 §2.1: the header is 256 + 256·ns bytes)
  put('truncated.edf', faultEdfBytes({ labels: WITH_MASTOIDS, seed: 20 }).subarray(0, 600));
  bad('b-truncated', 'truncated.edf');
  // wrong header size: the byte count disagrees with 256 + 256·ns
  edf('header-size.edf', { labels: WITH_MASTOIDS, seed: 21 }, (h) => (h.headerBytes = '1000'));
  bad('b-header-size', 'header-size.edf');
  // non-numeric field: physical maximum with a letter O for a zero
  edf('non-numeric.edf', { labels: WITH_MASTOIDS, seed: 22 }, (h) => (h.signals[1].pmax = '32OO'));
  bad('b-non-numeric', 'non-numeric.edf');
  // digital minimum not below digital maximum (EDF+ 2003 §2.1.3.5)
  edf('digital-limits.edf', { labels: WITH_MASTOIDS, seed: 23 }, (h) => {
    h.signals[2].dmin = '100';
    h.signals[2].dmax = '100';
  });
  bad('b-digital-limits', 'digital-limits.edf');
  // records past the end: the header declares 400 records, the file holds 300
  edf('past-end.edf', { labels: WITH_MASTOIDS, seed: 24 }, (h) => (h.nRecords = '400'));
  bad('b-past-end', 'past-end.edf');
  // EDF+D with a 15-s gap from 150 s: epoch 5 (150–180 s) crosses it and must be dropped, the rest stored
  edf('gaps.edf', { labels: WITH_MASTOIDS, seed: 25, gap: { startS: 150, lengthS: 15 } });
  bad('b-gaps', 'gaps.edf');
  // annotation garbage: record 3's annotation list starts with "++3" (EDF+ 2003 §2.2.2: onset is one sign, then digits)
  edf('annotation-garbage.edf', { labels: WITH_MASTOIDS, seed: 26, annotationOverride: { record: 3, text: '++3\x14\x14\x00\x15\x15junk\x00' } });
  bad('b-annotation-garbage', 'annotation-garbage.edf');
  // a separate scoring file (one label per 30-s epoch) 4 epochs longer than the 10-epoch recording
  edf('scored-long.edf', { labels: WITH_MASTOIDS, seed: 27 });
  put('long.txt', [...STAGES_10, 'N2', 'N2', 'N3', 'W'].join('\n') + '\n');
  bad('b-scoring-long', 'scored-long.edf', 'long.txt');
  // unknown stage labels in a separate scoring file
  edf('scored-unknown.edf', { labels: WITH_MASTOIDS, seed: 28 });
  put('unknown.txt', STAGES_10.map((s, e) => (e === 4 ? 'N5' : e === 7 ? 'deep' : s)).join('\n') + '\n');
  bad('b-unknown-labels', 'scored-unknown.edf', 'unknown.txt');
  // mixed sampling rates: C4 and M2 at 256 Hz, C3 and M1 at 128 Hz
  edf('mixed-rates.edf', { labels: WITH_MASTOIDS, fsHz: [128, 256, 128, 256], seed: 29 });
  bad('b-mixed-rates', 'mixed-rates.edf');
  // no mastoid channels while linked mastoids are asked for
  edf('no-mastoids.edf', { labels: ['EEG C3', 'EEG C4', 'EEG O1', 'EEG O2'], seed: 30 });
  bad('b-no-mastoids', 'no-mastoids.edf');
  // duplicate subject: a second row for g02 (no session), its own valid file
  edf('duplicate.edf', { labels: WITH_MASTOIDS, seed: 31 });
  bad('g02', 'duplicate.edf');
  // unreadable: a folder and a FIFO where the recording should be
  mkdirSync(path.join(dir, 'folder.edf'));
  bad('b-folder', 'folder.edf');
  execFileSync('mkfifo', [path.join(dir, 'pipe.edf')]);
  bad('b-fifo', 'pipe.edf');
  if (opts.permissionCase) {
    edf('locked.edf', { labels: WITH_MASTOIDS, seed: 32 });
    chmodSync(path.join(dir, 'locked.edf'), 0o000);
    bad('b-locked', 'locked.edf');
  }
  const table = path.join(dir, 'cohort.tsv');
  writeFileSync(
    table,
    ['subject\tgroup\trecording\tscoring', ...rows.map((r, i) => `${r.subject}\t${i % 2 ? 'patient' : 'control'}\t${r.recording}\t${r.scoring || 'n/a'}`)].join(
      '\n',
    ) + '\n',
  );
  return { table };
}

/** The good recordings alone (copies), for the disk-full run. */
export function writeGoodCohort(dir: string, from: string, subjects: string[]): string {
  mkdirSync(dir, { recursive: true });
  for (const s of subjects) copyFileSync(path.join(from, `${s}.edf`), path.join(dir, `${s}.edf`));
  const table = path.join(dir, 'cohort.tsv');
  writeFileSync(table, ['subject\tgroup\trecording', ...subjects.map((s, i) => `${s}\t${i % 2 ? 'patient' : 'control'}\t${s}.edf`)].join('\n') + '\n');
  return table;
}

export { headerBytesFor };
