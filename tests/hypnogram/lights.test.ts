import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording, LightsCell } from '../../ingest/cohort/types.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { resolveLights } from '../../ingest/hypnogram/lights.ts';
import { DEFAULT_SCORING_PARAMS, scoringForRecording, type ScoringParams } from '../../ingest/hypnogram/recording.ts';
import type { Hypnogram } from '../../ingest/hypnogram/types.ts';
import type { Stage } from '../../src/core/stages.ts';
import { writeLibedf, type LibedfAnnotation } from './libedf.ts';

// Lights off/on are EDF+ annotations with free texts and no standard spelling (shared/STANDARDS.md,
// "Sleep architecture around lights off and on"), so the list is configurable; the files are
// written by Debian's libedf (EDFlib 1.23). Which source wins and how clock times are placed are
// our rules (ingest/hypnogram/lights.ts, README).

const dir = mkdtempSync(path.join(tmpdir(), 'bw-hyp-lights-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string) => path.join(dir, name);
const STAGES: LibedfAnnotation[] = [
  [0, 600, 'Sleep stage W'],
  [600, 3000, 'Sleep stage 2'],
];

async function score(recording: string, scoring: string | null, p: Partial<ScoringParams> = {}, lights?: { off: LightsCell | null; on: LightsCell | null }) {
  const rec: CohortRecording = {
    row: 1,
    subject: 's',
    session: null,
    group: null,
    recordingPath: recording,
    scoringPath: scoring,
    covariates: {},
    ...(lights ? { lights } : {}),
  };
  const edf = await openEdf(recording);
  try {
    return await scoringForRecording(edf, rec, { ...DEFAULT_SCORING_PARAMS, ...p, epochS: 30 });
  } finally {
    await edf.close();
  }
}

beforeAll(() => {
  // spellings differ in case and spacing from the default list ('Lights out', 'Lights on')
  writeLibedf(dir, at('own.edf'), { seconds: 3600, signal: '0', annotations: [...STAGES, [300, null, 'LIGHTS  OUT'], [3300.5, null, 'lights on']] });
  writeLibedf(dir, at('codes.edf'), { seconds: 3600, signal: '0', annotations: [...STAGES, [300, null, 'LOFF'], [3300, null, 'LON']] });
  writeLibedf(dir, at('plain.edf'), { seconds: 3600, signal: '0', annotations: [] });
  // a separate scoring file 15 min after its recording, with lights off at its own 0 s
  writeLibedf(dir, at('late.edf'), {
    start: [2020, 1, 1, 22, 15, 0],
    seconds: 0,
    signal: null,
    annotations: [
      [0, 2700, 'Sleep stage 2'],
      [0, null, 'Lights off'],
    ],
  });
  writeLibedf(dir, at('midnight.edf'), { start: [2020, 1, 1, 23, 30, 0], seconds: 3600, signal: '0', annotations: [[0, 3600, 'Sleep stage 2']] });
});

describe('lights from EDF+ annotations', () => {
  it('matches the configured texts ignoring case and white space; they are not scored and not listed as other events', async () => {
    const r = await score(at('own.edf'), null);
    expect(r.lights).toEqual({ offS: 300, onS: 3300.5, source: 'annotation' });
    expect(r.hypnogram.warnings).toEqual([]);
    expect(r.hypnogram.stages).toEqual([...Array<Stage>(20).fill('W'), ...Array<Stage>(100).fill('N2')]);
  });

  it('takes other spellings from the configured lists only', async () => {
    const plain = await score(at('codes.edf'), null);
    expect(plain.lights.source).toBe('none');
    expect(plain.hypnogram.warnings.map((w) => w.kind)).toEqual(['ignored-events', 'ignored-events']);
    const mapped = await score(at('codes.edf'), null, { lightsOffTexts: ['loff'], lightsOnTexts: ['LON'] });
    expect(mapped.lights).toEqual({ offS: 300, onS: 3300, source: 'annotation' });
  });

  it('lights in a separate scoring file are placed by the same shift as its stages', async () => {
    const r = await score(at('plain.edf'), at('late.edf'));
    expect(r.shiftS).toBe(900);
    expect(r.lights).toEqual({ offS: 900, onS: null, source: 'annotation' });
  });
});

describe('lights from the cohort table', () => {
  it('a table time wins over an annotation, end by end', async () => {
    // recording 22:00:00; lights_off 22:10 = 600 s; lights on from the annotation (3300.5 s)
    const r = await score(at('own.edf'), null, {}, { off: { clockS: 22 * 3600 + 600 }, on: null });
    expect(r.lights).toEqual({ offS: 600, onS: 3300.5, source: 'table+annotation' });
    const secs = await score(at('own.edf'), null, {}, { off: { fromStartS: 120 }, on: { fromStartS: 3000 } });
    expect(secs.lights).toEqual({ offS: 120, onS: 3000, source: 'table' });
  });

  it('clock times across midnight: lights off nearest the recording start, lights on the next occurrence after it', async () => {
    // recording 23:30:00; lights off 23:45 = +900 s; lights on 00:20 = +3000 s (next day)
    const r = await score(at('midnight.edf'), null, {}, { off: { clockS: 23 * 3600 + 45 * 60 }, on: { clockS: 20 * 60 } });
    expect(r.lights).toEqual({ offS: 900, onS: 3000, source: 'table' });
    // lights off 23:20 is 600 s before the recording start: the start is taken, with a warning
    const early = await score(at('midnight.edf'), null, {}, { off: { clockS: 23 * 3600 + 20 * 60 }, on: null });
    expect(early.lights).toEqual({ offS: 0, onS: null, source: 'table' });
    expect(early.hypnogram.warnings).toEqual([
      { kind: 'lights-outside', epochs: [], message: 'lights off at -600 s is before the recording start: the recording start is taken' },
    ]);
  });
});

describe('resolveLights', () => {
  const hyp = (stages: Stage[]): Hypnogram => ({ epochS: 30, stages, source: 'test', warnings: [], partial: false });
  const night = hyp(Array<Stage>(10).fill('N2'));

  it('takes the first lights off and the last lights on of several, saying so', () => {
    const r = resolveLights({ off: [60, 30], on: [200, 280] }, undefined, 0, 300, night);
    expect(r.lights).toEqual({ offS: 30, onS: 280, source: 'annotation' });
    expect(r.warnings.map((w) => w.message)).toEqual([
      '2 lights-off annotations (at 30, 60 s): the first is taken',
      '2 lights-on annotations (at 200, 280 s): the last is taken',
    ]);
  });

  it('drops lights on that is not after lights off, the scoring window standing in', () => {
    const r = resolveLights({ off: [200], on: [100] }, undefined, 0, 300, night);
    expect(r.lights).toEqual({ offS: null, onS: null, source: 'none' });
    expect(r.warnings).toEqual([
      { kind: 'lights-order', epochs: [], message: 'lights on (100 s) is not after lights off (200 s): lights times ignored, the scoring window stands in' },
    ]);
    // only lights on, before the first scored epoch (epoch 4 = 120 s)
    const late = hyp([...Array<Stage>(4).fill('unscored'), ...Array<Stage>(6).fill('N2')]);
    const r2 = resolveLights({ off: [], on: [90] }, undefined, 0, 300, late);
    expect(r2.lights.source).toBe('none');
    expect(r2.warnings[0].message).toBe(
      'lights on (90 s) is not after lights off (120 s, start of scoring): lights times ignored, the scoring window stands in',
    );
  });

  it('moves lights on after the recording end to the end', () => {
    const r = resolveLights({ off: [0], on: [400] }, undefined, 0, 300, night);
    expect(r.lights).toEqual({ offS: 0, onS: 300, source: 'annotation' });
    expect(r.warnings[0].message).toBe('lights on at 400 s is after the recording end (300 s): the recording end is taken');
  });
});
