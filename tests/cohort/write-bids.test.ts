import { readFileSync, readdirSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { discoverBids } from '../../ingest/cohort/bids.ts';
import { readCohortTable } from '../../ingest/cohort/table.ts';
import { writeBidsCopy } from '../../src/simulation/write-bids.ts';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import { writeEdfWithLibedf } from '../hypnogram/libedf.ts';
import { cohortError, tempFolder } from './fixtures.ts';

// BIDS specification (EEG; summary in shared/STANDARDS.md): file names
// sub-<label>[_ses-<label>]_task-<label>[_acq-<label>][_run-<index>]_<suffix> inside
// sub-<label>/[ses-<label>/]eeg/; dataset_description.json with Name and BIDSVersion required;
// participants.tsv starts with participant_id; _channels.tsv starts with name, type, units;
// _eeg.json requires TaskName, EEGReference, SamplingFrequency, PowerLineFrequency, SoftwareFilters.
const BIDS_EEG_FILE =
  /^sub-([a-zA-Z0-9]+)(?:_ses-([a-zA-Z0-9]+))?_task-[a-zA-Z0-9]+(?:_acq-[a-zA-Z0-9]+)?(?:_run-\d+)?_(eeg\.edf|eeg\.json|channels\.tsv|events\.tsv)$/;

const src = tempFolder('bw-wbids-src-');
const out = tempFolder('bw-wbids-out-');
afterAll(() => {
  rmSync(src.dir, { recursive: true, force: true });
  rmSync(out.dir, { recursive: true, force: true });
});

beforeAll(() => {
  const edf = (rel: string, anns: [number, number | null, string][] = []) => writeEdfWithLibedf(src.dir, path.join(src.dir, rel), 240, anns);
  src.put('edf/.keep');
  src.put('scores/.keep');
  edf('edf/s01a.edf');
  edf('edf/s01b.edf');
  edf('edf/s02.edf', [
    [0, 120, 'Sleep stage W'],
    [120, 120, 'Sleep stage 2'],
  ]);
  edf('edf/p03.edf');
  edf('scores/p03-annotations.edf', [
    [0, 30, 'W'],
    [30, 180, 'N3'],
    [210, 30, 'R'],
    [100, null, 'Arousal'],
  ]);
  src.put('scores/s01a.tsv', 'onset\tduration\tstage\n0\t60\tW\n60\t30\tS1\n90\t90\tS2\n180\t60\tREM\n');
  // Text scoring stopping early: epochs 6–7 are a gap (unscored) on both sides.
  src.put('scores/s01b.txt', 'W\nW\nN1\nN2\nS4\nS3\n');
  src.put(
    'cohort.tsv',
    [
      'subject\tsession\tgroup\trecording\tscoring\tage\tsex',
      'S01\t1\tcontrol\tedf/s01a.edf\tscores/s01a.tsv\t30\tF',
      'S01\t2\tcontrol\tedf/s01b.edf\tscores/s01b.txt\t30\tF',
      'S02\tn/a\tcontrol\tedf/s02.edf\tn/a\t45\tM',
      'P03\tn/a\tpatient\tedf/p03.edf\tscores/p03-annotations.edf\tn/a\tn/a',
    ].join('\n'),
  );
});

describe('writeBidsCopy', () => {
  it('lays a table cohort out as BIDS that discovers back to the same cohort and scoring', async () => {
    const table = await readCohortTable(path.join(src.dir, 'cohort.tsv'));
    const target = path.join(out.dir, 'bids');
    const channels = [{ name: 'C3', type: 'EEG', units: 'uV', status: 'good' }];
    const result = await writeBidsCopy(table, target, { channels, eeg: { SamplingFrequency: 100, EEGReference: 'M2', PowerLineFrequency: 50 } });

    // Layout against the BIDS naming rules.
    const files: string[] = [];
    const walk = (d: string) =>
      readdirSync(d, { withFileTypes: true }).forEach((e) =>
        e.isDirectory() ? walk(path.join(d, e.name)) : files.push(path.relative(target, path.join(d, e.name))),
      );
    walk(target);
    const dataFiles = files.filter((f) => f.startsWith('sub-'));
    for (const f of dataFiles) {
      const m = BIDS_EEG_FILE.exec(path.basename(f));
      expect(m, f).not.toBeNull();
      expect(path.dirname(f)).toBe(path.join(`sub-${m![1]}`, ...(m![2] ? [`ses-${m![2]}`] : []), 'eeg'));
    }
    expect(dataFiles.filter((f) => f.endsWith('_eeg.edf')).sort()).toEqual([
      'sub-P03/eeg/sub-P03_task-sleep_eeg.edf',
      'sub-S01/ses-1/eeg/sub-S01_ses-1_task-sleep_eeg.edf',
      'sub-S01/ses-2/eeg/sub-S01_ses-2_task-sleep_eeg.edf',
      'sub-S02/eeg/sub-S02_task-sleep_eeg.edf',
    ]);
    expect(dataFiles.filter((f) => f.endsWith('_events.tsv'))).toHaveLength(3); // S02 keeps its EDF+ annotations
    const description = JSON.parse(readFileSync(path.join(target, 'dataset_description.json'), 'utf8'));
    expect(typeof description.Name).toBe('string');
    expect(description.BIDSVersion).toMatch(/^\d+\.\d+\.\d+$/);
    expect(readFileSync(path.join(target, 'participants.tsv'), 'utf8')).toBe(
      'participant_id\tgroup\tage\tsex\nsub-S01\tcontrol\t30\tF\nsub-S02\tcontrol\t45\tM\nsub-P03\tpatient\tn/a\tn/a\n',
    );
    const stem = path.join(target, 'sub-S01/ses-1/eeg/sub-S01_ses-1_task-sleep');
    expect(readFileSync(`${stem}_channels.tsv`, 'utf8')).toBe('name\ttype\tunits\tstatus\nC3\tEEG\tuV\tgood\n');
    expect(JSON.parse(readFileSync(`${stem}_eeg.json`, 'utf8'))).toEqual({
      TaskName: 'sleep',
      EEGReference: 'M2',
      SamplingFrequency: 100,
      PowerLineFrequency: 50,
      SoftwareFilters: 'n/a',
    });
    expect(readFileSync(`${stem}_events.tsv`, 'utf8')).toBe('onset\tduration\tstage\n0\t60\tW\n60\t30\tN1\n90\t90\tN2\n180\t60\tR\n');
    // Hard link (same inode) where the file system allows it, else a byte-equal copy.
    const a = statSync(table.recordings[0].recordingPath);
    const b = statSync(result.recordingPaths[0]);
    expect(b.ino === a.ino || readFileSync(result.recordingPaths[0]).equals(readFileSync(table.recordings[0].recordingPath))).toBe(true);

    // Discovered back: the same participants, columns and recordings.
    const bids = await discoverBids(target);
    expect(bids.columns).toEqual(table.columns);
    expect(bids.participants).toEqual(table.participants);
    const key = (c: typeof table) =>
      c.recordings.map((r) => ({ subject: r.subject, session: r.session, group: r.group, covariates: r.covariates, scored: r.scoringPath !== null }));
    expect(key(bids)).toEqual(key(table));
    expect(bids.recordings[0].bids).toEqual({ samplingHz: 100, reference: 'M2', powerLineHz: 50, channels });

    // The same stages from both layouts, read against the 240-s recordings.
    for (let i = 0; i < table.recordings.length; i++) {
      const t = table.recordings[i];
      // the recordings and the annotation scoring file all start 2020-01-01 22:00:00 (libedf.ts)
      const recording = { startS: Date.UTC(2020, 0, 1, 22) / 1000, durationS: 240 };
      const fromTable = await readScoring(t.scoringPath ?? t.recordingPath, { recordingDurationS: 240, ...(t.scoringPath !== null ? { recording } : {}) });
      const br = bids.recordings[i];
      const fromBids = await readScoring(br.scoringPath ?? br.recordingPath, { recordingDurationS: 240 });
      expect(fromBids.stages, t.subject).toEqual(fromTable.stages);
      expect(fromBids.stages).toHaveLength(8);
    }
    const s01b = await readScoring(bids.recordings[1].scoringPath!, { recordingDurationS: 240 });
    expect(s01b.stages).toEqual(['W', 'W', 'N1', 'N2', 'N3', 'N3', 'unscored', 'unscored']);
    expect(s01b.warnings.map((w) => [w.kind, w.epochs])).toEqual([['scoring-ends-early', [6, 7]]]);
    expect(result.scoringWarnings.find((w) => w.row === 4)?.warnings.map((w) => w.kind)).toEqual(['ignored-events']);
  });

  it('refuses a non-empty output folder and subject labels BIDS cannot carry, naming the rows', async () => {
    const table = await readCohortTable(path.join(src.dir, 'cohort.tsv'));
    const busy = path.join(out.dir, 'busy');
    out.put('busy/readme.txt', 'x');
    expect((await cohortError(writeBidsCopy(table, busy))).message).toContain('the output folder is not empty (1 entries)');
    const renamed = {
      ...table,
      recordings: table.recordings.map((r, i) => (i === 2 ? { ...r, subject: 'S-02' } : i === 1 ? { ...r, session: 'night 2' } : r)),
    };
    const e = await cohortError(writeBidsCopy(renamed, path.join(out.dir, 'fresh'), { task: 'sleep_1' }));
    expect(e.problems.map((p) => [p.row, p.column, p.message])).toEqual([
      [null, null, "task label 'sleep_1' must be alphanumeric (BIDS)"],
      [2, 'session', "session 'night 2' is not a BIDS label (letters and digits only)"],
      [3, 'subject', "subject 'S-02' is not a BIDS label (letters and digits only)"],
    ]);
  });
});
