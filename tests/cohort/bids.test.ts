import { rmSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { discoverBids } from '../../ingest/cohort/bids.ts';
import { discoverCohort } from '../../ingest/cohort/discover.ts';
import { cohortError, tempFolder } from './fixtures.ts';

// Layout per the BIDS specification, EEG modality (summarised in shared/STANDARDS.md):
// sub-<label>/[ses-<label>/]eeg/sub-<label>[_ses-<label>]_task-<label>[_acq-<label>][_run-<index>]_eeg.edf
// (BIDS EEG allows .edf and .bdf among its data formats; bandwise reads those two)
// with _eeg.json, _channels.tsv (name, type, units first, in that order), _events.tsv (onset,
// duration) beside it; participants.tsv with participant_id 'sub-<label>'; TSV missing = n/a.

const eegJson = (fs: number, ref: string, line: number | 'n/a') =>
  JSON.stringify({ TaskName: 'sleep', SamplingFrequency: fs, EEGReference: ref, PowerLineFrequency: line, SoftwareFilters: 'n/a' });
const channels = 'name\ttype\tunits\tstatus\nC3\tEEG\tuV\tgood\nM2\tEEG\tuV\tbad\nEOGL\tEOG\tuV\tn/a\n';
const events = 'onset\tduration\tstage\n0\t60\tW\n60\t30\tN2\n';

function goodFolder() {
  const t = tempFolder('bw-bids-');
  t.put('dataset_description.json', JSON.stringify({ Name: 'invented', BIDSVersion: '1.9.0' }));
  t.put('participants.tsv', 'participant_id\tage\tsex\tgroup\nsub-01\t34\tF\tcontrol\nsub-02\tn/a\tM\tpatient\n');
  const s1 = 'sub-01/ses-1/eeg/sub-01_ses-1_task-sleep';
  t.put(`${s1}_eeg.edf`, 'x');
  t.put(`${s1}_eeg.json`, eegJson(256, 'Cz', 50));
  t.put(`${s1}_channels.tsv`, channels);
  t.put(`${s1}_events.tsv`, events);
  const s2 = 'sub-01/ses-2/eeg/sub-01_ses-2_task-sleep';
  t.put(`${s2}_eeg.edf`, 'x');
  t.put(`${s2}_eeg.json`, eegJson(128, 'n/a', 'n/a'));
  for (const run of [1, 2]) {
    const b = `sub-02/eeg/sub-02_task-sleep_acq-hd_run-${run}`;
    t.put(`${b}_eeg.edf`, 'x');
    t.put(`${b}_eeg.json`, eegJson(512, 'M1', 60));
    t.put(`${b}_events.tsv`, 'onset\tduration\ttrial_type\n0\t30\tN3\n');
  }
  t.put('sub-02/eeg/sub-02_task-nap_eeg.edf', 'x');
  t.put('sub-02/eeg/sub-02_task-nap_eeg.json', eegJson(512, 'M1', 60));
  return t;
}

describe('discoverBids', () => {
  const t = goodFolder();
  afterAll(() => rmSync(t.dir, { recursive: true, force: true }));

  it('finds every recording with its session, sidecars and participant columns', async () => {
    const c = await discoverBids(t.dir);
    expect(c.source).toBe('bids');
    expect(c.root).toBe(t.dir);
    expect(c.columns).toEqual([
      { name: 'subject', kind: 'string' },
      { name: 'group', kind: 'string' },
      { name: 'age', kind: 'number' },
      { name: 'sex', kind: 'string' },
    ]);
    expect(c.participants).toEqual([
      { subject: '01', group: 'control', age: 34, sex: 'F' },
      { subject: '02', group: 'patient', age: null, sex: 'M' },
    ]);
    expect(
      c.recordings.map((r) => [
        r.row,
        r.subject,
        r.session,
        r.group,
        path.relative(t.dir, r.recordingPath),
        r.scoringPath && path.relative(t.dir, r.scoringPath),
      ]),
    ).toEqual([
      [1, '01', '1', 'control', 'sub-01/ses-1/eeg/sub-01_ses-1_task-sleep_eeg.edf', 'sub-01/ses-1/eeg/sub-01_ses-1_task-sleep_events.tsv'],
      [1, '01', '2', 'control', 'sub-01/ses-2/eeg/sub-01_ses-2_task-sleep_eeg.edf', null],
      [2, '02', null, 'patient', 'sub-02/eeg/sub-02_task-nap_eeg.edf', null],
      [2, '02', null, 'patient', 'sub-02/eeg/sub-02_task-sleep_acq-hd_run-1_eeg.edf', 'sub-02/eeg/sub-02_task-sleep_acq-hd_run-1_events.tsv'],
      [2, '02', null, 'patient', 'sub-02/eeg/sub-02_task-sleep_acq-hd_run-2_eeg.edf', 'sub-02/eeg/sub-02_task-sleep_acq-hd_run-2_events.tsv'],
    ]);
    expect(c.recordings[0].covariates).toEqual({ age: 34, sex: 'F' });
    expect(c.recordings[0].bids).toEqual({
      samplingHz: 256,
      reference: 'Cz',
      powerLineHz: 50,
      channels: [
        { name: 'C3', type: 'EEG', units: 'uV', status: 'good' },
        { name: 'M2', type: 'EEG', units: 'uV', status: 'bad' },
        { name: 'EOGL', type: 'EOG', units: 'uV', status: null },
      ],
    });
    // PowerLineFrequency "n/a" and EEGReference "n/a" → null; no _channels.tsv → no channels.
    expect(c.recordings[1].bids).toEqual({ samplingHz: 128, reference: null, powerLineHz: null, channels: [] });
    expect(c.recordings[3].bids?.powerLineHz).toBe(60);
    expect((await discoverCohort(t.dir)).recordings).toHaveLength(5);
  });

  it('takes a BDF recording (_eeg.bdf) like an EDF one, with its sidecars', async () => {
    const b = goodFolder();
    try {
      b.put('sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_eeg.bdf', 'x');
      b.put('sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_eeg.json', eegJson(2048, 'CMS', 50));
      b.put('sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_events.tsv', 'onset\tduration\tstage\n0\t30\tN2\n');
      const c = await discoverBids(b.dir);
      const bdf = c.recordings.find((r) => r.recordingPath.endsWith('.bdf'))!;
      expect(path.relative(b.dir, bdf.recordingPath)).toBe('sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_eeg.bdf');
      expect([bdf.subject, bdf.session, bdf.group]).toEqual(['02', null, 'patient']);
      expect(path.relative(b.dir, bdf.scoringPath!)).toBe('sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_events.tsv');
      expect(bdf.bids).toEqual({ samplingHz: 2048, reference: 'CMS', powerLineHz: 50, channels: [] });
      expect(c.recordings).toHaveLength(6);
      // an .edf and a .bdf with the same entities: one recording per name, the second refused
      b.put('sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_eeg.edf', 'x');
      const e = await cohortError(discoverBids(b.dir));
      expect(e.problems.map((p) => p.message)).toEqual([
        'sub-02/eeg/sub-02_task-sleep_acq-hd_run-3_eeg.edf: sub-02_task-sleep_acq-hd_run-3_eeg.bdf has the same entities; keep one recording per name',
      ]);
    } finally {
      rmSync(b.dir, { recursive: true, force: true });
    }
  });
});

describe('discoverBids problems', () => {
  const folders: string[] = [];
  afterAll(() => folders.forEach((d) => rmSync(d, { recursive: true, force: true })));

  it('reports subjects missing on either side, bad names, bad sidecars, all together', async () => {
    const t = goodFolder();
    folders.push(t.dir);
    t.put('participants.tsv', 'participant_id\tage\tgroup\nsub-01\t34\tcontrol\nsub-02\t40\tn/a\nsub-01\t35\tpatient\n01x\t1\tcontrol\nsub-09\t50\tcontrol\n');
    t.put('sub-03/eeg/sub-03_task-sleep_eeg.edf', 'x'); // folder without participants row
    t.put('sub-03/eeg/sub-03_task-sleep_eeg.json', eegJson(256, 'Cz', 50));
    t.put('sub-01/ses-1/eeg/sub-01_task-rest_ses-1_eeg.edf', 'x'); // entity order
    t.put('sub-01/ses-1/eeg/sub-01_ses-2_task-rest_eeg.edf', 'x'); // session mismatch
    t.put('sub-01/ses-1/eeg/sub-01_ses-1_task-rest_eeg.dat', 'x'); // neither EDF nor BDF
    t.put('sub-01/ses-1/eeg/sub-01_ses-1_task-hum_eeg.edf', 'x');
    t.put('sub-01/ses-1/eeg/sub-01_ses-1_task-hum_eeg.json', eegJson(256, 'Cz', 55 as 50));
    t.put('sub-01/ses-1/eeg/sub-01_ses-1_task-hum_channels.tsv', 'type\tname\tunits\nEEG\tC3\tuV\n');
    t.put('sub-01/ses-1/eeg/sub-01_ses-1_task-hum_events.tsv', 'onset\tduration\tvalue\n0\t30\t1\n');
    t.put('sub-01/ses-1/eeg/sub-01_ses-1_task-nojson_eeg.edf', 'x');
    const e = await cohortError(discoverBids(t.dir));
    const msgs = e.problems.map((p) => `${p.row ?? '-'}|${p.column ?? '-'}|${p.message}`);
    const expected = [
      "2|group|participants.tsv: group of 'sub-02' is empty (the table has a group column, so every subject needs one)",
      "3|participant_id|participants.tsv: 'sub-01' is already in row 1",
      "4|participant_id|participants.tsv: participant_id '01x' must be 'sub-<label>' with an alphanumeric label",
      "5|participant_id|participants.tsv: 'sub-09' has no EEG recording (sub-09/[ses-*/]eeg/*_eeg.edf or .bdf)",
      "-|participant_id|folder 'sub-03' has no row in participants.tsv",
      "-|-|sub-01/ses-1/eeg/sub-01_task-rest_ses-1_eeg.edf: entity 'ses' is out of order or repeated (BIDS order: sub, ses, task, acq, run)",
      '-|-|sub-01/ses-1/eeg/sub-01_ses-2_task-rest_eeg.edf: ses-2 in the file name, but the folder is ses-1',
      '-|-|sub-01/ses-1/eeg/sub-01_ses-1_task-rest_eeg.dat: only EDF and BDF recordings are read (found .dat)',
      '-|PowerLineFrequency|sub-01/ses-1/eeg/sub-01_ses-1_task-hum_eeg.json: PowerLineFrequency must be 50, 60 or "n/a"',
      '-|-|sub-01/ses-1/eeg/sub-01_ses-1_task-hum_channels.tsv: the first columns must be name, type, units (BIDS), found type, name, units',
      "-|stage|sub-01/ses-1/eeg/sub-01_ses-1_task-hum_events.tsv: no 'stage' or 'trial_type' column to carry the sleep stages",
      '-|-|sub-01/ses-1/eeg/sub-01_ses-1_task-nojson_eeg.edf: the sidecar sub-01_ses-1_task-nojson_eeg.json is missing (BIDS requires it)',
    ];
    for (const m of expected) expect(msgs).toContain(m);
    expect(msgs).toHaveLength(expected.length);
    expect(e.message).toContain("row 3, column 'participant_id': participants.tsv: 'sub-01' is already in row 1");
  });

  it('needs participants.tsv with participant_id, and well-formed names and sidecars', async () => {
    const t = goodFolder();
    folders.push(t.dir);
    rmSync(path.join(t.dir, 'participants.tsv'));
    expect((await cohortError(discoverBids(t.dir))).message).toContain('participants.tsv is missing or unreadable');
    t.put('participants.tsv', 'id\tage\nsub-01\t3\n');
    expect((await cohortError(discoverBids(t.dir))).message).toContain("required column 'participant_id' is missing (header: id, age)");

    const u = tempFolder('bw-bids-bad-');
    folders.push(u.dir);
    u.put('participants.tsv', 'participant_id\nsub-01\n');
    u.put('sub-01/eeg/sub-01_eeg.edf', 'x'); // no task
    u.put('sub-01/eeg/sub-01_task-sleep_run-x_eeg.edf', 'x'); // run index not a number
    u.put('sub-01/eeg/sub-01_task-sleep_desc-a_eeg.edf', 'x'); // unknown entity
    u.put('sub-01/eeg/sub-01_task-sleep_eeg.edf', 'x');
    u.put('sub-01/eeg/sub-01_task-sleep_eeg.json', '{"SamplingFrequency": "256",');
    u.put('sub-01/eeg/sub-01_task-ok_eeg.edf', 'x');
    u.put('sub-01/eeg/sub-01_task-ok_eeg.json', '{"SamplingFrequency": "256", "EEGReference": 3}');
    u.put('sub-01/eeg/sub-01_task-ok_channels.tsv', 'name\ttype\tunits\tstatus\nC3\tEEG\tuV\tfine\n\tEEG\tuV\tgood\n');
    const e = await cohortError(discoverBids(u.dir));
    const msgs = e.problems.map((p) => p.message);
    expect(msgs).toContain('sub-01/eeg/sub-01_eeg.edf: the file name needs sub-<label> and task-<label>');
    expect(msgs).toContain("sub-01/eeg/sub-01_task-sleep_run-x_eeg.edf: 'run-x' — a run index must be a non-negative integer");
    expect(msgs).toContain(
      "sub-01/eeg/sub-01_task-sleep_desc-a_eeg.edf: 'desc-a' is not an EEG file-name entity (expected sub-, ses-, task-, acq-, run- in that order)",
    );
    expect(msgs.some((m) => m.startsWith('sub-01/eeg/sub-01_task-sleep_eeg.json: not valid JSON'))).toBe(true);
    expect(msgs).toContain('sub-01/eeg/sub-01_task-ok_eeg.json: SamplingFrequency must be a number (Hz)');
    expect(msgs).toContain('sub-01/eeg/sub-01_task-ok_eeg.json: EEGReference must be a string');
    expect(msgs).toContain("sub-01/eeg/sub-01_task-ok_channels.tsv: row 1: status 'fine' must be good, bad or n/a");
    expect(msgs).toContain('sub-01/eeg/sub-01_task-ok_channels.tsv: row 2 has no channel name');
  });
});
