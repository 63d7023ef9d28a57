// Ingest fault catalogue (issue 8, "Faults and bad input"): one cohort table with four good
// recordings and one bad input per case, ingested by the real `bandwise ingest` in a child
// process that obeys file modes (as root: without CAP_DAC_OVERRIDE and CAP_DAC_READ_SEARCH, so a
// mode-000 file is really refused; plain root reads anything). Every failing case must be in ingest_errors with file, step and message; the good
// recordings stored whole; the exit status 3 ("some recordings failed", src/cli/ingest.ts and
// the README). Then a full disk: a 1-MiB tmpfs (or, where mount is not allowed, a file size limit
// on the child) as the database's home.
// Outside sources: the EDF header rules (Kemp et al. 1992 §2.1: header = 256 + 256·ns bytes,
// numeric ASCII fields; §2.2: 2 bytes per sample), EDF+ (Kemp & Olivan 2003 §2.1.3.5 digital
// minimum < maximum; §2.2.2 TAL onset = one sign then digits; §2.1.3.1 EDF+D may be
// discontinuous), the scoring rule of 30-s epochs (common practice), POSIX errors (EACCES, ENOSPC).
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GOOD, writeCatalogueCohort } from './catalogue-cohort.ts';
import { faultEdfBytes } from './fixture.ts';
import { perRecordingCounts, run, withDb, type Ended } from './helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-faults-'));
const cohortDir = path.join(dir, 'cohort');
const isRoot = process.getuid?.() === 0;
// a child that obeys file modes: as root, without the two capabilities that bypass them
// (CAP_DAC_OVERRIDE, CAP_DAC_READ_SEARCH; capabilities(7)), dropped from the bounding set by
// util-linux setpriv, so root's exec gets neither. The repo, wherever it is cloned, stays readable.
const DROP_DAC = ['setpriv', '--bounding-set=-dac_override,-dac_read_search'];
const obeyModes = isRoot ? DROP_DAC : [];
const ARGS = ['--jobs', '2', '--no-fit', '--reference', 'recorded,linked-mastoids'];

let result: Ended;
const db = path.join(cohortDir, 'out.duckdb');

beforeAll(async () => {
  const { table } = writeCatalogueCohort(cohortDir, { permissionCase: true });
  result = await run(['ingest', table, '--out', db, ...ARGS], obeyModes, { ...process.env, HOME: cohortDir });
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

type Expected = { step: string; field: string | null; message: RegExp };
// recordBytes = 2·(4·128 + 24) = 1072 per 1-s record (EDF 1992 §2.2); header 256 + 256·5 = 1536 (§2.1)
const FAILS: Record<string, Expected> = {
  'truncated.edf': { step: 'open', field: 'file', message: /^truncated\.edf: file is truncated: 600 bytes, shorter than its 1536-byte header$/ },
  'header-size.edf': { step: 'open', field: 'number of bytes in header', message: /number of bytes in header 1000 disagrees with 256 \+ 256·5 signals = 1536/ },
  'non-numeric.edf': {
    step: 'open',
    field: 'physical maximum',
    message: /signal 2 \("EEG C4"\): the value \(letters or other characters; content withheld\) is not a number/,
  },
  'digital-limits.edf': { step: 'open', field: 'digital minimum', message: /signal 3 \("EEG M1"\): digital minimum 100 is not below digital maximum 100/ },
  'past-end.edf': {
    step: 'open',
    field: 'number of data records',
    message: /number of data records 400 disagrees with the file size: 321600 data bytes hold 300 records of 1072 bytes/,
  },
  'annotation-garbage.edf': {
    step: 'open',
    field: 'annotations',
    message: /data record 4, field "annotations" .*: TAL 1: the onset \(3 bytes, content withheld\) is not a signed number/,
  },
  'scored-long.edf': { step: 'scoring', field: null, message: /^long\.txt: .*scoring runs past the recording end \(300 s\) at epochs 10–13/s },
  'scored-unknown.edf': {
    step: 'scoring',
    field: null,
    message: /^unknown\.txt: .*unknown stage label \(text #[0-9a-f]{8}, line 5\) at epoch 4 .*unknown stage label \(text #[0-9a-f]{8}, line 8\) at epoch 7/s,
  },
  'duplicate.edf': { step: 'cohort', field: 'subject', message: /^cohort table row 16, column 'subject': subject 'g02' \(no session\) is already in row 2$/ },
  'folder.edf': {
    step: 'cohort',
    field: 'recording',
    message: /^cohort table row 17, column 'recording': 'folder\.edf' is not a file but a folder \(folder\.edf\)$/,
  },
  'pipe.edf': { step: 'cohort', field: 'recording', message: /'pipe\.edf' is not a file but a FIFO \(named pipe\)/ },
  'locked.edf': { step: 'open', field: 'file', message: /cannot open the file \(EACCES\): .*permission denied/ },
};
const STORED = [...GOOD.map((s) => `${s}.edf`), 'gaps.edf', 'mixed-rates.edf', 'no-mastoids.edf'];

describe('ingest fault catalogue: one cohort, each bad input a real file, folder, FIFO or unreadable file', () => {
  it('the child really ran without permission overrides, so mode 000 denies (else the permission case proves nothing)', () => {
    if (isRoot) {
      // CapEff of the child (proc(5)): bits 1 (dac_override) and 2 (dac_read_search) are clear
      const capEff = execFileSync(DROP_DAC[0], [...DROP_DAC.slice(1), 'grep', 'CapEff', '/proc/self/status'])
        .toString()
        .trim()
        .split(/\s+/)[1];
      expect(BigInt(`0x${capEff}`) & 0b110n).toBe(0n);
    }
    const probe = spawnSync(obeyModes[0] ?? 'cat', [...obeyModes.slice(1), ...(obeyModes.length ? ['cat'] : []), path.join(cohortDir, 'locked.edf')]);
    expect(probe.status).not.toBe(0);
    expect(probe.stderr.toString()).toMatch(/Permission denied/);
  });

  it('exits 3 (some recordings failed, the others stored) and says so', () => {
    expect(result.code, result.out).toBe(3);
    // one warning: the EDF+D gap of gaps.edf
    expect(result.out).toMatch(/: 7 done, 0 already stored \(skipped\), 12 failed, 1 warning \(table warnings\), in /);
    expect(result.out).not.toMatch(/\n\s+at .*\(.*:\d+:\d+\)/); // no stack trace
  });

  it('every failing case is in ingest_errors with its file, step, field and message', async () => {
    const rows = await withDb(db, (q) => q('SELECT e.*, r.run_id AS known_run FROM ingest_errors e LEFT JOIN runs r USING (run_id) ORDER BY file'));
    expect(rows.map((r) => r.file).sort()).toEqual(Object.keys(FAILS).sort());
    for (const r of rows) {
      const want = FAILS[String(r.file)];
      expect({ file: r.file, step: r.step, field: r.field }).toEqual({ file: r.file, step: want.step, field: want.field });
      expect(String(r.message), String(r.file)).toMatch(want.message);
      expect(r.known_run).toBe(r.run_id);
      expect(r.logged_at).not.toBeNull();
      // file names relative to the cohort folder: no absolute path (which may name people) in the database
      expect(String(r.message)).not.toContain(cohortDir);
    }
  });

  it('the good recordings and the tolerated cases are stored whole', async () => {
    const recs = await withDb(db, (q) => q('SELECT file_name, subject, status, n_epochs, duration_s, recording_id FROM recordings ORDER BY file_name'));
    expect(recs.map((r) => r.file_name)).toEqual([...STORED].sort());
    // gaps.edf lacks 15 s of signal: partial-data (ingest/store/schema.ts, recordings.status)
    for (const r of recs) expect([r.status, r.n_epochs, r.duration_s]).toEqual([r.file_name === 'gaps.edf' ? 'partial-data' : 'ok', 10, 300]);
    const counts = await perRecordingCounts(db);
    const byFile = Object.fromEntries(recs.map((r) => [String(r.file_name), counts[String(r.recording_id)]]));
    // every recording's rows belong to a stored recording (none half-stored)
    expect(Object.keys(counts).sort()).toEqual(recs.map((r) => String(r.recording_id)).sort());
    for (const s of GOOD) {
      // 4 channels; 10 epochs; spectra: recorded 4 channels + linked mastoids 2 scalp channels (M1, M2 are the reference), × 5 stages × mean/median
      expect(byFile[`${s}.edf`]).toMatchObject({ n_epochs: 10, channels: 4, epochs: 10, spectra: (4 + 2) * 5 * 2 });
    }
    // the second row for g02 added no participant: g02 once, with row 2's group
    const g02 = await withDb(db, (q) => q('SELECT "group" FROM participants WHERE subject = \'g02\''));
    expect(g02).toEqual([{ group: 'patient' }]);
  });

  it('EDF+D gap (150–165 s): the epoch crossing it (5, 150–180 s) is dropped as "gap", never joined; the rest stored', async () => {
    const epochs = await withDb(db, (q) =>
      q("SELECT epoch, onset_s, stage, drop_reason FROM epochs JOIN recordings USING (recording_id) WHERE file_name = 'gaps.edf' ORDER BY epoch"),
    );
    expect(epochs.map((e) => e.drop_reason)).toEqual([null, null, null, null, null, 'gap', null, null, null, null]);
    expect(epochs.map((e) => e.onset_s)).toEqual([0, 30, 60, 90, 120, 150, 180, 210, 240, 270]);
    const rec = await withDb(db, (q) => q("SELECT n_epochs_dropped FROM recordings WHERE file_name = 'gaps.edf'"));
    expect(rec[0].n_epochs_dropped).toBe(1);
    // the gap is kept as a warning of that recording (EDF+ 2003 §2.1.3.1: EDF+D may be discontinuous)
    const warnings = await withDb(db, (q) =>
      q('SELECT w.file, w.step, w.field, w.message, w.recording_id = r.recording_id AS own FROM warnings w JOIN recordings r ON r.file_name = w.file'),
    );
    expect(warnings).toEqual([
      {
        file: 'gaps.edf',
        step: 'open',
        field: 'annotations',
        message: '1 gap between data records, 15 s in total; epochs that touch a gap are dropped',
        own: true,
      },
    ]);
    // N3 is epochs 4 and 5: with 5 dropped, at most one N3 epoch can enter its spectrum (g01 has two candidates)
    const n3 = await withDb(db, (q) =>
      q(
        "SELECT file_name, max(spectra.n_epochs) AS n FROM spectra JOIN recordings USING (recording_id) WHERE stage = 'N3' AND reference = 'recorded' AND file_name IN ('gaps.edf', 'g01.edf') GROUP BY file_name ORDER BY file_name",
      ),
    );
    expect(n3).toEqual([
      { file_name: 'g01.edf', n: 2 },
      { file_name: 'gaps.edf', n: 1 },
    ]);
  });

  it('mixed sampling rates are stored on one frequency grid; the mastoid reference they cannot support is skipped with its reason in reference_skips', async () => {
    const ch = await withDb(db, (q) =>
      q("SELECT channel, fs_hz FROM channels JOIN recordings USING (recording_id) WHERE file_name = 'mixed-rates.edf' ORDER BY channel"),
    );
    expect(ch).toEqual([
      { channel: 'C3', fs_hz: 128 },
      { channel: 'C4', fs_hz: 256 },
      { channel: 'M1', fs_hz: 128 },
      { channel: 'M2', fs_hz: 256 },
    ]);
    // 4-s Welch segments at either rate: 0.25-Hz bins, 0–45 Hz = 181 bins (README "Spectra")
    const grid = await withDb(db, (q) =>
      q("SELECT DISTINCT freq_step_hz, n_bins, reference FROM spectra JOIN recordings USING (recording_id) WHERE file_name = 'mixed-rates.edf'"),
    );
    expect(grid).toEqual([{ freq_step_hz: 0.25, n_bins: 181, reference: 'recorded' }]);
    const skips = await withDb(db, (q) =>
      q('SELECT file_name, s.reference, reason FROM reference_skips s JOIN recordings USING (recording_id) ORDER BY file_name'),
    );
    expect(skips).toEqual([
      { file_name: 'mixed-rates.edf', reference: 'linked-mastoids', reason: 'mastoid and scalp channels have different sampling rates' },
      { file_name: 'no-mastoids.edf', reference: 'linked-mastoids', reason: 'mastoid M1/A1 and M2/A2 not recorded' },
    ]);
    const refs = await withDb(db, (q) => q("SELECT DISTINCT reference FROM spectra JOIN recordings USING (recording_id) WHERE file_name = 'no-mastoids.edf'"));
    expect(refs).toEqual([{ reference: 'recorded' }]);
  });
});

describe('disk full for the output database', () => {
  const diskDir = path.join(dir, 'disk');
  const goodDir = path.join(dir, 'good');
  let mounted = false;
  let table = '';
  const EIGHT = Array.from({ length: 8 }, (_, i) => `d${i + 1}`);
  beforeAll(() => {
    mkdirSync(goodDir, { recursive: true });
    for (const [i, s] of EIGHT.entries())
      writeFileSync(path.join(goodDir, `${s}.edf`), faultEdfBytes({ labels: ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'], seed: 60 + i }));
    table = path.join(goodDir, 'cohort.tsv');
    writeFileSync(table, ['subject\trecording', ...EIGHT.map((s) => `${s}\t${s}.edf`)].join('\n') + '\n');
    mkdirSync(diskDir);
    // a real small file system (needs CAP_SYS_ADMIN: there in this container); else a file size limit on the child
    mounted = spawnSync('mount', ['-t', 'tmpfs', '-o', 'size=1m', 'tmpfs', diskDir]).status === 0;
  });
  afterAll(() => {
    if (mounted) spawnSync('umount', [diskDir]);
  });

  it('stops with a plain message, keeps what was stored, no stack trace; a rerun with room resumes', async () => {
    const out = path.join(diskDir, 'cohort.duckdb');
    // measured: 8 recordings of 4 channels × 5 min need about 2.1 MB of write-ahead log, so 1 MiB fills midway
    const limit = mounted ? [] : ['prlimit', '--fsize=700000'];
    const r = await run(['ingest', table, '--out', out, '--jobs', '1', '--no-fit', '--reference', 'recorded,linked-mastoids'], limit);
    expect(r.code, r.out).toBe(1);
    const m = new RegExp(
      `no room to write ${out.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: (${mounted ? 'no space left on the device' : 'the file size limit was reached'}) while writing d\\d\\.edf; the run stopped\\. ` +
        'The (\\d) recordings? of this run stored before (is|are) kept; free some space and rerun the same command',
    ).exec(r.out);
    expect(m, r.out).not.toBeNull();
    expect(r.out).not.toMatch(/\n\s+at /); // no stack trace
    expect(r.out).not.toMatch(/cannot rollback/); // the first error is the one reported
    const kept = Number(m![2]);
    expect(kept).toBeGreaterThanOrEqual(1);
    expect(kept).toBeLessThan(8);
    // reopened (DuckDB replays its write-ahead log): exactly the recordings said to be kept, each whole
    const counts = await perRecordingCounts(out);
    expect(Object.keys(counts)).toHaveLength(kept);
    for (const c of Object.values(counts)) expect(c).toMatchObject({ n_epochs: 10, channels: 4, epochs: 10, spectra: 60 });
    // room again: the same command stores the rest and skips the kept ones
    if (mounted) expect(spawnSync('mount', ['-o', 'remount,size=32m', diskDir]).status).toBe(0);
    const again = await run(['ingest', table, '--out', out, '--jobs', '1', '--no-fit', '--reference', 'recorded,linked-mastoids']);
    expect(again.code, again.out).toBe(0);
    expect(again.out).toContain(`${8 - kept} done, ${kept} already stored (skipped), 0 failed`);
    expect(Object.keys(await perRecordingCounts(out))).toHaveLength(8);
  }, 60_000);
});
