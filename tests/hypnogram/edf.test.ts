import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readScoringEdf } from '../../ingest/hypnogram/edf.ts';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';
import { writeEdfWithLibedf } from './libedf.ts';
import type { LibedfAnnotation } from './libedf.ts';

// Outside reference: the EDF+ files are written by Debian's libedf (EDFlib 1.23), an independent
// EDF+ implementation; annotation onset/duration are given in units of 100 µs (edflib.h).

const dir = mkdtempSync(path.join(tmpdir(), 'bw-hyp-edf-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const writeWithLibedf = (name: string, seconds: number, anns: LibedfAnnotation[]) => writeEdfWithLibedf(dir, path.join(dir, name), seconds, anns);

let night = '';
let scoringOnly = '';
beforeAll(() => {
  const stages: LibedfAnnotation[] = [
    [0, 60, 'Sleep stage W'],
    [60, 30, 'Sleep stage 1'],
    [90, 60, 'Sleep stage 2'],
    [100, 3, 'Arousal'],
    [150, 30, 'Sleep stage 3'],
    [180, 60, 'Sleep stage R'],
  ];
  night = writeWithLibedf('night.edf', 240, stages);
  scoringOnly = writeWithLibedf('scoring.edf', 300, stages);
});

describe('scoring from EDF+ files written by libedf', () => {
  it('reads the stages from the recording’s own annotations', async () => {
    const h = await readScoringEdf(night);
    expect(h.stages).toEqual(['W', 'W', 'N1', 'N2', 'N2', 'N3', 'R', 'R']);
    expect(h.source).toBe('annotations:night.edf');
    expect(h.warnings).toHaveLength(1);
    expect(h.warnings[0]).toMatchObject({ kind: 'ignored-events', epochs: [3] });
    expect(h.warnings[0].message).not.toContain('Arousal'); // free text is named by hash and onset
    expect(h.warnings[0].message).toContain('first at 100 s');
    // The dispatcher picks the same reader by extension.
    expect((await readScoring(night)).stages).toEqual(h.stages);
  });

  it('a separate annotation EDF takes the recording length from the caller', async () => {
    // The annotation file is 300 s long; the recording is 240 s; both start 2020-01-01 22:00:00.
    const start = Date.UTC(2020, 0, 1, 22) / 1000;
    const sep = await readScoringEdf(scoringOnly, { recording: { startS: start, durationS: 240 } });
    expect(sep.stages).toHaveLength(8);
    expect(sep.warnings.map((w) => w.kind)).toEqual(['ignored-events']);
    // Read as if it were the recording itself, its own 300 s apply: epochs 8–9 are a gap.
    const own = await readScoringEdf(scoringOnly);
    expect(own.stages).toHaveLength(10);
    expect(own.warnings.find((w) => w.kind === 'scoring-ends-early')?.epochs).toEqual([8, 9]);
    // A recording shorter than the scoring: epochs 6–7 past the end of a 180-s recording.
    const err = await readScoringEdf(scoringOnly, { recording: { startS: start, durationS: 180 } }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ScoringError);
    expect((err as ScoringError).epochs).toEqual([6, 7]);
    expect((err as ScoringError).message).toContain("'Sleep stage R' (annotation at 180 s)");
  });
});
