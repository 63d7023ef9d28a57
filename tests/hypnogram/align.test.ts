import { copyFileSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import { DEFAULT_SCORING_PARAMS, scoringForRecording, type ScoringParams } from '../../ingest/hypnogram/recording.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';
import type { Stage } from '../../src/core/stages.ts';
import { concat, handEdf, talBytes } from '../edf/helpers.ts';
import { writeLibedf, type LibedfAnnotation } from './libedf.ts';

// Outside references: the files are written by Debian's libedf (EDFlib 1.23) or built byte by
// byte from the EDF+ field table (tests/edf/helpers.ts). EDF+ (Kemp & Olivan 2003): annotation
// onsets count from the file's own start = header start date/time + the time-keeping onset of
// its first data record; a separate annotation file lies on its recording at
// shift = (annotation file start) − (recording start).

const dir = mkdtempSync(path.join(tmpdir(), 'bw-hyp-align-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string) => path.join(dir, name);

/** The scoring as the scorer wrote it, onsets from the scoring file's start: W 10 min, N2 20 min, W 15 min. */
const SCORED: LibedfAnnotation[] = [
  [0, 600, 'Sleep stage W'],
  [600, 1200, 'Sleep stage 2'],
  [1800, 900, 'Sleep stage W'],
];
/** What it means on a 60-min recording that started 15 min before the scoring file: epochs 0–29 unscored. */
const ALIGNED: Stage[] = [...Array<Stage>(30).fill('unscored'), ...Array<Stage>(20).fill('W'), ...Array<Stage>(40).fill('N2'), ...Array<Stage>(30).fill('W')];

const params = (p: Partial<ScoringParams> = {}) => ({ ...DEFAULT_SCORING_PARAMS, ...p, epochS: 30 });
const rec = (scoringPath: string | null, recordingPath = at('rec.edf')): CohortRecording => ({
  row: 1,
  subject: 's1',
  session: null,
  group: null,
  recordingPath,
  scoringPath,
  covariates: {},
});
async function score(scoringPath: string | null, recordingPath = at('rec.edf'), p: Partial<ScoringParams> = {}) {
  const edf = await openEdf(recordingPath);
  try {
    return await scoringForRecording(edf, rec(scoringPath, recordingPath), params(p));
  } finally {
    await edf.close();
  }
}
async function refused(p: Promise<unknown>): Promise<ScoringError> {
  const e = await p.then(
    () => null,
    (x: unknown) => x,
  );
  expect(e).toBeInstanceOf(ScoringError);
  return e as ScoringError;
}

beforeAll(() => {
  // the recording: 2020-01-01 22:00:00, 3600 s
  writeLibedf(dir, at('rec.edf'), { seconds: 3600, signal: '0', annotations: [] });
  // the same recording starting 0.25 s after its header time
  writeLibedf(dir, at('rec-sub.edf'), { seconds: 3600, signal: '0', annotations: [], subsecondS: 0.25 });
  // annotation-only scoring files (libedf with no ordinary signal)
  writeLibedf(dir, at('late.edf'), { start: [2020, 1, 1, 22, 15, 0], seconds: 0, signal: null, annotations: SCORED });
  writeLibedf(dir, at('late-sub.edf'), { start: [2020, 1, 1, 22, 15, 0], subsecondS: 0.25, seconds: 0, signal: null, annotations: SCORED });
  writeLibedf(dir, at('late-half.edf'), { start: [2020, 1, 1, 22, 15, 0], subsecondS: 0.5, seconds: 0, signal: null, annotations: SCORED });
  writeLibedf(dir, at('late-10s.edf'), { start: [2020, 1, 1, 22, 15, 10], seconds: 0, signal: null, annotations: SCORED });
  writeLibedf(dir, at('other-day.edf'), { start: [2020, 1, 3, 22, 15, 0], seconds: 0, signal: null, annotations: SCORED });
  writeLibedf(dir, at('after-end.edf'), { start: [2020, 1, 1, 23, 30, 0], seconds: 0, signal: null, annotations: SCORED });
  writeLibedf(dir, at('early.edf'), {
    start: [2020, 1, 1, 21, 55, 0],
    seconds: 0,
    signal: null,
    annotations: [
      [0, 300, 'Sleep stage ?'],
      [300, 3600, 'Sleep stage 2'],
    ],
  });
  // record duration 0, built by hand (EDF+ 2003 allows it for annotation-only files): 22:15:00
  const records = SCORED.map(([o, d, t]) => talBytes(`+0\x14\x14\x00+${o}\x15${d}\x14${t}\x14\x00`, 60));
  writeFileSync(
    at('zero.edf'),
    handEdf({
      patient: 'X X X X',
      recording: 'Startdate 01-JAN-2020 X X X',
      date: '01.01.20',
      time: '22.15.00',
      reserved: 'EDF+C',
      nRecords: String(records.length),
      duration: '0',
      signals: [{ label: 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-32768', dmax: '32767', spr: '30' }],
      data: concat(records),
    }),
  );
});

describe('a separate scoring EDF+ is placed on its recording by absolute time', () => {
  it('a scoring file that starts 15 min after its recording scores epochs 30 onwards', async () => {
    const r = await score(at('late.edf'));
    expect(r.shiftS).toBe(900);
    expect(r.hypnogram.stages).toEqual(ALIGNED);
    expect(r.hypnogram.partial).toBe(true);
    expect(r.hypnogram.warnings.map((w) => [w.kind, w.epochs.length])).toEqual([['scoring-starts-late', 30]]);
  });

  it('an annotation-only file with record duration 0 is read the same way', async () => {
    const r = await score(at('zero.edf'));
    expect([r.shiftS, r.hypnogram.stages]).toEqual([900, ALIGNED]);
  });

  it('sub-second start offsets count: equal offsets give a whole-epoch shift', async () => {
    // recording 22:00:00 + 0.25 s, scoring 22:15:00 + 0.25 s: shift 900 s exactly
    const r = await score(at('late-sub.edf'), at('rec-sub.edf'));
    expect(r.shiftS).toBeCloseTo(900, 9);
    expect(r.hypnogram.stages).toEqual(ALIGNED);
    expect(r.hypnogram.warnings.map((w) => w.kind)).toEqual(['scoring-starts-late']);
  });

  it('a shift less than 1 s off the epoch grid is moved onto it, with a warning naming the offset', async () => {
    // scoring 22:15:00.5 on a recording at 22:00:00: 900.5 s, 0.5 s off the 30-s grid
    const r = await score(at('late-half.edf'));
    expect(r.shiftS).toBeCloseTo(900, 9);
    expect(r.hypnogram.stages).toEqual(ALIGNED);
    const w = r.hypnogram.warnings.find((x) => x.kind === 'scoring-shift-snapped')!;
    expect(w.message).toBe(
      'the scoring starts 900.5 s after the recording (scoring file 2020-01-01 22:15:00.5, recording 2020-01-01 22:00:00): 0.5 s off the 30-s epoch grid, below the 1-s resolution of EDF header clocks; moved onto the grid (shift 900 s)',
    );
  });

  it('a shift 1 s or more off the epoch grid is refused in one error with both start times', async () => {
    const e = await refused(score(at('late-10s.edf')));
    expect(e.problems.map((p) => p.kind)).toEqual(['shift-off-grid']);
    expect(e.message).toContain('scoring file 2020-01-01 22:15:10, recording 2020-01-01 22:00:00');
    expect(e.message).toContain('10 s off the 30-s epoch grid');
  });

  it('refuses files from another day or without any overlap, naming both start times', async () => {
    const day = await refused(score(at('other-day.edf')));
    expect(day.problems.map((p) => p.kind)).toEqual(['start-times']);
    expect(day.message).toContain('scoring file 2020-01-03 22:15:00, recording 2020-01-01 22:00:00');
    expect(day.message).toContain('more than a day apart');
    const after = await refused(score(at('after-end.edf')));
    expect(after.problems.map((p) => p.kind)).toEqual(['start-times']);
    expect(after.message).toContain('scoring file 2020-01-01 23:30:00, recording 2020-01-01 22:00:00');
    expect(after.message).toContain('no scored epoch lies inside the recording (0–3600 s)');
  });

  it('a scoring file that starts before the recording: unscored epochs before the start are trimmed', async () => {
    const r = await score(at('early.edf'));
    expect(r.shiftS).toBe(-300);
    expect(r.hypnogram.stages).toEqual(Array<Stage>(120).fill('N2'));
    expect(r.hypnogram.warnings.map((w) => [w.kind, w.epochs])).toEqual([['trimmed-unscored', Array.from({ length: 10 }, (_, i) => i - 10)]]);
  });

  it('a scoring table has no clock of its own: laid on the recording start, no shift', async () => {
    writeFileSync(at('s.tsv'), 'onset\tduration\tstage\n0\t3600\tN2\n');
    const r = await score(at('s.tsv'));
    expect([r.shiftS, r.hypnogram.stages]).toEqual([null, Array<Stage>(120).fill('N2')]);
  });

  it('the recording’s own annotations: shift 0', async () => {
    writeLibedf(dir, at('own.edf'), { seconds: 120, signal: '0', annotations: [[0, 120, 'Sleep stage 3']] });
    const r = await score(null, at('own.edf'));
    expect([r.shiftS, r.hypnogram.stages]).toEqual([0, ['N3', 'N3', 'N3', 'N3']]);
  });

  it('a .bdf scoring file goes to the EDF+/BDF+ annotation reader', async () => {
    copyFileSync(at('late.edf'), at('late.bdf'));
    expect((await readScoring(at('late.bdf'))).stages).toEqual(ALIGNED.slice(30));
    expect((await score(at('late.bdf'))).hypnogram.stages).toEqual(ALIGNED);
  });
});
