import { execFileSync, spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { DEFAULT_SCORING_PARAMS, scoringForRecording } from '../../ingest/hypnogram/recording.ts';
import { runIngest, type IngestSummary } from '../../ingest/run.ts';
import { resolveIngestParams } from '../../ingest/pipeline.ts';
import type { Stage } from '../../src/core/stages.ts';
import { writeLibedf, type LibedfAnnotation } from './libedf.ts';

// A small invented cohort shaped like clinical exports, every file written by Debian's libedf
// (EDFlib 1.23), ingested into a real DuckDB file twice: with the defaults (runIngest), and with
// --trim-scoring, --label-map and --unknown-as-unscored (the ingest command). Stored stages are
// checked against what was planted, the N2 spectrum of the 15-min case against scipy.signal.welch
// (tests/ingest/scipy_pipeline.py: numpy decode of the EDF, Kemp et al. 1992, then welch per
// epoch), and the architecture against values hand-derived from the AASM definitions
// (Iber et al. 2007; see src/core/hypnogram/architecture.ts). Size: 7 recordings of ≤ 60 min,
// one 100-Hz channel.

const dir = mkdtempSync(path.join(tmpdir(), 'bw-hyp-ingest-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string) => path.join(dir, name);
const repo = path.resolve(import.meta.dirname, '../..');
/** Invented identity, typed into the patient field and into free-text annotations. */
const SECRET = 'Quillfeather_Zebediah';
const IDENTITY = `Pt ${SECRET} 29-FEB-1952`;
const fill = (n: number, s: Stage) => Array<Stage>(n).fill(s);

/** Scoring as the scorer wrote it, onsets from the scoring file's start (22:15:00): W 10 min, N2 20 min, W 15 min. */
const SCORED: LibedfAnnotation[] = [
  [0, 600, 'Sleep stage W'],
  [600, 1200, 'Sleep stage 2'],
  [700, null, IDENTITY],
  [1800, 900, 'Sleep stage W'],
];
/** On the 60-min recording that started at 22:00:00: epochs 0–29 unscored, 30–49 W, 50–89 N2, 90–119 W. */
const LATE = [...fill(30, 'unscored'), ...fill(20, 'W'), ...fill(40, 'N2'), ...fill(30, 'W')];
// The signal follows the intended stages: 12.5-Hz waves in N2 (1500–2700 s), 9.5 Hz in W, a 3.1-Hz background throughout.
const LATE_SIGNAL = '5*sin(2*M_PI*3.1*t) + ((t >= 1500 && t < 2700) ? 20*sin(2*M_PI*12.5*t) : (t >= 900) ? 15*sin(2*M_PI*9.5*t) : 0)';
const PLAIN = '5*sin(2*M_PI*3.1*t) + 2*sin(2*M_PI*11*t)';

/** The lights night, 120 epochs of 30 s (planted). */
const NIGHT: [number, number, Stage][] = [
  [0, 20, 'W'],
  [20, 4, 'N1'],
  [24, 36, 'N2'],
  [60, 20, 'N3'],
  [80, 6, 'W'],
  [86, 14, 'N2'],
  [100, 10, 'R'],
  [110, 10, 'W'],
];
const LABEL: Record<Stage, string> = {
  W: 'Sleep stage W',
  N1: 'Sleep stage 1',
  N2: 'Sleep stage 2',
  N3: 'Sleep stage 3',
  R: 'Sleep stage R',
  unscored: 'Sleep stage ?',
};

let runA: IngestSummary;
let cliB: { code: number | null; out: string };

async function query(db: string, sql: string): Promise<Record<string, unknown>[]> {
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  try {
    return (await c.runAndReadAll(sql)).getRowObjectsJson() as Record<string, unknown>[];
  } finally {
    c.closeSync();
    inst.closeSync();
  }
}
const stagesOf = async (db: string, file: string) =>
  (await query(db, `SELECT e.stage FROM epochs e JOIN recordings r USING (recording_id) WHERE r.file_name = '${file}' ORDER BY e.epoch`)).map((r) => r.stage);
const recordingRow = async (db: string, file: string) => (await query(db, `SELECT * FROM recordings WHERE file_name = '${file}'`))[0];

beforeAll(async () => {
  const common = { patientName: IDENTITY };
  writeLibedf(dir, at('rec-late.edf'), { ...common, seconds: 3600, signal: LATE_SIGNAL, annotations: [[100, null, IDENTITY]] });
  writeLibedf(dir, at('hyp-late.edf'), { start: [2020, 1, 1, 22, 15, 0], seconds: 0, signal: null, annotations: SCORED });
  // sub-second start offsets: recording 22:00:00.25, scoring 22:15:00.75 → 900.5 s, moved onto the grid (900 s)
  writeLibedf(dir, at('rec-sub.edf'), { ...common, subsecondS: 0.25, seconds: 3600, signal: PLAIN, annotations: [] });
  writeLibedf(dir, at('hyp-sub.edf'), { start: [2020, 1, 1, 22, 15, 0], subsecondS: 0.75, seconds: 0, signal: null, annotations: SCORED });
  // a scoring file from two days later
  writeLibedf(dir, at('rec-day.edf'), { ...common, seconds: 3600, signal: PLAIN, annotations: [] });
  writeLibedf(dir, at('hyp-day.edf'), { start: [2020, 1, 3, 22, 15, 0], seconds: 0, signal: null, annotations: SCORED });
  // trailing unscored labels after the last sample
  writeLibedf(dir, at('rec-trail.edf'), {
    ...common,
    seconds: 1800,
    signal: PLAIN,
    annotations: [
      [0, 1800, 'Sleep stage 2'],
      [1800, 60, 'Sleep stage ?'],
      [1860, 30, 'Movement time'],
    ],
  });
  // a scored stage past the end (epochs 60–61 of a 60-epoch recording)
  writeLibedf(dir, at('rec-past.edf'), {
    ...common,
    seconds: 1800,
    signal: PLAIN,
    annotations: [
      [0, 1740, 'Sleep stage 2'],
      [1740, 120, 'Sleep stage R'],
    ],
  });
  // lights off at 290 s (inside epoch 9), lights on at 3450 s (start of epoch 115)
  const night: LibedfAnnotation[] = NIGHT.map(([e, n, s]) => [e * 30, n * 30, LABEL[s]]);
  writeLibedf(dir, at('rec-lights.edf'), {
    ...common,
    seconds: 3600,
    signal: PLAIN,
    annotations: [...night, [290, null, 'Lights off'], [3450, null, 'Lights on'], [1000, null, IDENTITY]],
  });
  // labels only a label map knows, and an unknown one that looks like a stage label
  writeLibedf(dir, at('rec-map.edf'), {
    ...common,
    seconds: 660,
    signal: PLAIN,
    annotations: [
      [0, 300, 'Stadium W'],
      [300, 300, 'Stadium 2'],
      [600, 60, `Sleep stage ${SECRET}`],
    ],
  });
  writeFileSync(at('map.tsv'), 'label\tstage\nStadium W\tW\nStadium 2\tN2\n');
  writeFileSync(
    at('cohort.tsv'),
    [
      'subject\trecording\tscoring\tlights_off\tlights_on',
      'late\trec-late.edf\thyp-late.edf\t22:20\t23:00',
      'sub\trec-sub.edf\thyp-sub.edf\tn/a\tn/a',
      'day\trec-day.edf\thyp-day.edf\tn/a\tn/a',
      'trail\trec-trail.edf\tn/a\tn/a\tn/a',
      'past\trec-past.edf\tn/a\tn/a\tn/a',
      'lights\trec-lights.edf\tn/a\tn/a\tn/a',
      'map\trec-map.edf\tn/a\tn/a\tn/a',
    ].join('\n') + '\n',
  );
  const noOutliers = { ...resolveIngestParams().rejection, outlierZ: 1e9 }; // identical epochs: the robust z rule is off
  runA = await runIngest(at('cohort.tsv'), at('a.duckdb'), { jobs: 2, params: { rejection: noOutliers, fit: null } });
  cliB = await new Promise((resolve) => {
    const p = spawn(
      process.execPath,
      [
        path.join(repo, 'bin/run-ts.mjs'),
        path.join(repo, 'tests/ingest/cli-entry.ts'),
        'ingest',
        at('cohort.tsv'),
        '--out',
        at('b.duckdb'),
        '--jobs',
        '2',
        '--quiet',
        '--no-fit',
        '--outlier-z',
        '1e9',
        '--trim-scoring',
        '--label-map',
        at('map.tsv'),
        '--unknown-as-unscored',
        '--lights-on-texts',
        'Lights on,LON',
      ],
      { stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let out = '';
    p.stdout.on('data', (d) => (out += d));
    p.stderr.on('data', (d) => (out += d));
    p.on('close', (code) => resolve({ code, out }));
  });
}, 240_000);

describe('ingest with the defaults', () => {
  it('stores the 15-min-late scoring where it belongs: stages, shift, N2 spectrum equal to scipy over epochs 50–89', async () => {
    expect(runA.done).toBe(4);
    expect(await stagesOf(at('a.duckdb'), 'rec-late.edf')).toEqual(LATE);
    expect((await recordingRow(at('a.duckdb'), 'rec-late.edf')).scoring_shift_s).toBe(900);
    const row = (
      await query(
        at('a.duckdb'),
        `SELECT s.n_epochs, s.power FROM spectra s JOIN recordings r USING (recording_id)
      WHERE r.file_name = 'rec-late.edf' AND s.stage = 'N2' AND s.reference = 'recorded' AND s.averaging = 'mean'`,
      )
    )[0];
    expect(row.n_epochs).toBe(40);
    const ref = at('late.f64');
    const summary = JSON.parse(
      execFileSync('python3', [path.join(repo, 'tests/ingest/scipy_pipeline.py'), at('rec-late.edf'), '30', '4', '45', ref], { encoding: 'utf8' })
        .trim()
        .split('\n')
        .pop()!,
    );
    const perEpoch = new Float64Array(readFileSync(ref).buffer.slice(0));
    const nBins = summary.n_bins as number;
    const power = row.power as number[];
    expect(power.length).toBe(nBins);
    const mean = Array.from({ length: nBins }, (_, k) => {
      let m = 0;
      for (let e = 50; e < 90; e++) m += perEpoch[e * nBins + k] / 40;
      return m;
    });
    const peak = Math.max(...mean);
    // Float32 storage: 1e-4 relative; bins below 1e-8 of the peak hold only the EDF quantisation noise, where Float32 sums differ more
    for (let k = 1; k < nBins; k++) expect(Math.abs(power[k] - mean[k]), `bin ${k}`).toBeLessThan(1e-4 * mean[k] + 1e-8 * peak);
    // laid on the recording start instead (epochs 20–59), "N2" would be mostly background and 9.5-Hz W: 12.5 Hz (bin 50) half as strong
    let wrong = 0;
    for (let e = 20; e < 60; e++) wrong += perEpoch[e * nBins + 50] / 40;
    expect(mean[50]).toBe(peak);
    expect(power[50] / wrong).toBeGreaterThan(1.9);
  });

  it('moves a sub-second offset onto the epoch grid and stores the shift applied', async () => {
    expect(await stagesOf(at('a.duckdb'), 'rec-sub.edf')).toEqual(LATE);
    expect((await recordingRow(at('a.duckdb'), 'rec-sub.edf')).scoring_shift_s).toBeCloseTo(900, 6);
  });

  it('refuses a scoring file from another day into ingest_errors with both start times', async () => {
    const errors = await query(at('a.duckdb'), `SELECT file, step, message FROM ingest_errors ORDER BY file`);
    const day = errors.find((e) => e.file === 'rec-day.edf')!;
    expect(day.step).toBe('scoring');
    expect(day.message).toMatch(/^hyp-day\.edf: /);
    expect(day.message).toContain('scoring file 2020-01-03 22:15:00, recording 2020-01-01 22:00:00');
    expect(runA.failed.map((f) => path.basename(f.file)).sort()).toEqual(['rec-day.edf', 'rec-map.edf', 'rec-past.edf']);
    expect(errors.find((e) => String(e.file).endsWith('rec-past.edf'))!.message).toContain('scoring runs past the recording end (1800 s) at epochs 60–61');
  });

  it('trims trailing unscored labels past the end', async () => {
    expect(await stagesOf(at('a.duckdb'), 'rec-trail.edf')).toEqual(fill(60, 'N2'));
  });

  it('stores lights and the architecture between them (values hand-derived from the AASM definitions)', async () => {
    const r = await recordingRow(at('a.duckdb'), 'rec-lights.edf');
    expect(await stagesOf(at('a.duckdb'), 'rec-lights.edf')).toEqual(NIGHT.flatMap(([, n, s]) => fill(n, s)));
    // lights off 290 s, lights on 3450 s: TRT = 3160 s = 52.667 min; epochs wholly inside: 10–114.
    // TST = N1 20–23 + N2 24–59 + N3 60–79 + N2 86–99 + R 100–109 = 84 epochs = 42 min; SE = 2520/3160 × 100.
    // Sleep latency = 600 s − 290 s = 310 s; REM latency = epoch 100 − epoch 20 = 40 min;
    // WASO = W 80–85 and 110–114 = 11 epochs = 5.5 min (check: 310 + 2520 + 330 = 3160 s).
    expect([r.lights_off_s, r.lights_on_s, r.lights_source]).toEqual([290, 3450, 'annotation']);
    expect(r.trt_min).toBeCloseTo(3160 / 60, 9);
    expect(r.tst_min).toBe(42);
    expect(r.se_pct).toBeCloseTo((2520 / 3160) * 100, 9);
    expect(r.sol_min).toBeCloseTo(310 / 60, 9);
    expect(r.rem_latency_min).toBe(40);
    expect(r.waso_min).toBe(5.5);
    expect(r.scoring_shift_s).toBe(0);
    // lights from the cohort table (22:20 and 23:00 on a 22:00:00 recording): 1200–3600 s, epochs 40–119:
    // TRT 40 min; TST = N2 50–89 = 20 min; SE 50 %; latency (1500 − 1200) s = 5 min; WASO = W 90–119 = 15 min; no R.
    const late = await recordingRow(at('a.duckdb'), 'rec-late.edf');
    expect([
      late.lights_off_s,
      late.lights_on_s,
      late.lights_source,
      late.trt_min,
      late.tst_min,
      late.se_pct,
      late.sol_min,
      late.waso_min,
      late.rem_latency_min,
    ]).toEqual([1200, 3600, 'table', 40, 20, 50, 5, 15, null]);
    // no lights anywhere: the scored period stands in (epochs 0–59 of the trailing case)
    const trail = await recordingRow(at('a.duckdb'), 'rec-trail.edf');
    expect([trail.lights_off_s, trail.lights_on_s, trail.lights_source, trail.trt_min, trail.se_pct]).toEqual([null, null, 'none', 30, 100]);
  });
});

describe('ingest with --trim-scoring, --label-map and --unknown-as-unscored', () => {
  it('stores the options in the run parameters', async () => {
    expect(cliB.code, cliB.out).toBe(3); // the other-day scoring still fails
    const [run] = await query(at('b.duckdb'), 'SELECT parameters FROM runs');
    const p = JSON.parse(String(run.parameters));
    expect(p.scoring).toEqual({
      ...DEFAULT_SCORING_PARAMS,
      labelMap: { 'Stadium W': 'W', 'Stadium 2': 'N2' },
      unknownAs: 'unscored',
      trimScoredOutside: true,
      lightsOnTexts: ['Lights on', 'LON'],
    });
  });

  it('trims scored stages past the end, reads the label map, scores an unknown label as unscored', async () => {
    expect(await stagesOf(at('b.duckdb'), 'rec-past.edf')).toEqual([...fill(58, 'N2'), ...fill(2, 'R')]);
    expect(await stagesOf(at('b.duckdb'), 'rec-map.edf')).toEqual([...fill(10, 'W'), ...fill(10, 'N2'), ...fill(2, 'unscored')]);
  });
});

describe('no free text of annotations or identity anywhere', () => {
  it('not in the warnings, not in ingest_errors, not in any byte of either database', async () => {
    for (const file of ['rec-late.edf', 'rec-lights.edf']) {
      const rec: CohortRecording = {
        row: 1,
        subject: 's',
        session: null,
        group: null,
        recordingPath: at(file),
        scoringPath: file === 'rec-late.edf' ? at('hyp-late.edf') : null,
        covariates: {},
      };
      const edf = await openEdf(at(file));
      const r = await scoringForRecording(edf, rec, { ...DEFAULT_SCORING_PARAMS, epochS: 30 });
      await edf.close();
      expect(r.hypnogram.warnings.some((w) => w.kind === 'ignored-events')).toBe(true);
      expect(JSON.stringify(r)).not.toContain(SECRET);
    }
    expect(runA.failed.map((f) => f.message).join('\n')).not.toContain(SECRET);
    expect(cliB.out).not.toContain(SECRET);
    for (const db of ['a.duckdb', 'b.duckdb']) {
      for (const f of [at(db), `${at(db)}.wal`]) if (existsSync(f)) expect(readFileSync(f).includes(SECRET), f).toBe(false);
      expect(JSON.stringify(await query(at(db), 'SELECT * FROM ingest_errors'))).not.toContain(SECRET);
    }
  });
});
