import { describe, expect, it } from 'vitest';
import { sleepArchitecture } from '../../src/core/hypnogram/architecture.ts';
import type { Stage } from '../../src/core/stages.ts';

// Definitions: AASM Manual for the Scoring of Sleep and Associated Events (Iber et al. 2007),
// summary statistics (wording from memory, see architecture.ts) — total recording time (TRT) =
// lights off to lights on; TST = N1+N2+N3+R between them; SE = TST / TRT × 100; sleep latency =
// lights off to the first epoch of any sleep; REM latency = sleep onset to the first epoch of R;
// WASO = wake after sleep onset, before lights on. Every expected value below is hand-derived
// from these definitions. Without lights times the scored period (first to last scored epoch)
// stands in for lights off to lights on.

describe('sleepArchitecture', () => {
  it('matches a hand-worked 20-epoch hypnogram', () => {
    // Worked by hand, 30-s epochs (0.5 min each):
    // epoch  0  1  2  3  4  5  6  7  8  9 10 11 12 13 14 15 16 17 18 19
    // stage  W  W  W  N1 N2 N2 W  N2 N3 N3 N2 R  R  -  N2 W  R  W  W  -     (- = unscored)
    // W 7 epochs = 3.5 min; N1 1 = 0.5; N2 5 = 2.5; N3 2 = 1.0; R 3 = 1.5; unscored 2 = 1.0
    // TST = 0.5 + 2.5 + 1.0 + 1.5 = 5.5 min
    // scored period = epochs 0..18 (19 epochs; the trailing unscored epoch 19 is outside) = 9.5 min
    // SE = 5.5 / 9.5 × 100 = 57.8947… %
    // SOL = first sleep epoch 3 − lights off 0 = 3 epochs = 1.5 min
    // REM latency = first R epoch 11 − sleep onset 3 = 8 epochs = 4.0 min
    // WASO = W epochs after sleep onset 3 up to the end of the scored period 18 = epochs 6, 15, 17, 18 = 2.0 min
    const s = 'W W W N1 N2 N2 W N2 N3 N3 N2 R R - N2 W R W W -'.split(' ').map((x) => (x === '-' ? 'unscored' : x)) as Stage[];
    const a = sleepArchitecture(s, 30);
    expect(a.minutesPerStage).toEqual({ W: 3.5, N1: 0.5, N2: 2.5, N3: 1, R: 1.5, unscored: 1 });
    expect(a.totalSleepTimeMin).toBe(5.5);
    expect(a.totalRecordingTimeMin).toBe(9.5);
    expect(a.sleepEfficiencyPct).toBeCloseTo((5.5 / 9.5) * 100, 10);
    expect(a.sleepOnsetLatencyMin).toBe(1.5);
    expect(a.remLatencyMin).toBe(4);
    expect(a.wasoMin).toBe(2);
  });

  it('takes lights off as the first scored epoch when scoring starts late', () => {
    // unscored unscored W W N1 N2 W (30-s epochs):
    // scored period epochs 2..6 = 5 epochs = 2.5 min; TST = N1 + N2 = 1.0 min; SE = 40 %;
    // SOL = epoch 4 − epoch 2 = 1.0 min; no R → REM latency null; WASO = epoch 6 = 0.5 min.
    const a = sleepArchitecture(['unscored', 'unscored', 'W', 'W', 'N1', 'N2', 'W'], 30);
    expect(a.totalRecordingTimeMin).toBe(2.5);
    expect(a.totalSleepTimeMin).toBe(1);
    expect(a.sleepEfficiencyPct).toBeCloseTo(40, 12);
    expect(a.sleepOnsetLatencyMin).toBe(1);
    expect(a.remLatencyMin).toBeNull();
    expect(a.wasoMin).toBe(0.5);
  });

  it('uses the epoch length given (20-s epochs)', () => {
    // N2 R W N2: 4 epochs × 20 s = 80 s = 1.3333 min TIB; TST 3 × 20 s = 1 min; SOL 0; REM latency 20 s; WASO 20 s.
    const a = sleepArchitecture(['N2', 'R', 'W', 'N2'], 20);
    expect(a.totalRecordingTimeMin).toBeCloseTo(80 / 60, 12);
    expect(a.totalSleepTimeMin).toBeCloseTo(1, 12);
    expect(a.sleepOnsetLatencyMin).toBe(0);
    expect(a.remLatencyMin).toBeCloseTo(1 / 3, 12);
    expect(a.wasoMin).toBeCloseTo(1 / 3, 12);
  });

  it('handles a night without sleep and an empty hypnogram', () => {
    const wake = sleepArchitecture(['W', 'W', 'W'], 30);
    expect(wake.totalSleepTimeMin).toBe(0);
    expect(wake.sleepEfficiencyPct).toBe(0);
    expect(wake.sleepOnsetLatencyMin).toBeNull();
    expect(wake.remLatencyMin).toBeNull();
    const none = sleepArchitecture(['unscored', 'unscored'], 30);
    expect(none.totalRecordingTimeMin).toBe(0);
    expect(none.sleepEfficiencyPct).toBeNull();
    expect(none.minutesPerStage.unscored).toBe(1);
    expect(() => sleepArchitecture(['W'], 0)).toThrow(/epochS/);
    expect(() => sleepArchitecture(['X' as Stage], 30)).toThrow(/'X' is not a stage/);
  });

  // 24 epochs of 30 s, lights off at 45 s (inside epoch 1), lights on at 600 s (end of epoch 19):
  // epoch  0 1 2 3 4  5  6  7 8  9  10 11 12 13 14 15 16 17 18 19 | 20 21 22 23
  // stage  W W W W N1 N2 N2 W N2 N3 N3 N2 R  R  -  N2 W  R  W  W  | W  N2 W  W   (- = unscored)
  const night = 'W W W W N1 N2 N2 W N2 N3 N3 N2 R R - N2 W R W W W N2 W W'.split(' ').map((x) => (x === '-' ? 'unscored' : x)) as Stage[];

  it('follows lights off and lights on (hand-worked from the AASM definitions)', () => {
    // TRT = 600 − 45 = 555 s = 9.25 min.
    // Epochs wholly between lights off and on: 2..19 (epoch 1 starts before 45 s; 20 starts at lights on).
    // TST there = N1 (4) + N2 (5, 6, 8, 11, 15) + N3 (9, 10) + R (12, 13, 17) = 11 epochs = 5.5 min
    //   (the N2 of epoch 21 is after lights on and does not count).
    // SE = 5.5 / 9.25 × 100 = 59.459459… %.
    // Sleep latency = start of epoch 4 (120 s) − lights off 45 s = 75 s = 1.25 min.
    // REM latency = epoch 12 − sleep onset epoch 4 = 8 epochs = 4 min.
    // WASO = W after sleep onset before lights on: epochs 7, 16, 18, 19 = 2 min.
    // Check: SOL 1.25 + TST 5.5 + WASO 2 + unscored after onset (epoch 14) 0.5 = 9.25 = TRT.
    const a = sleepArchitecture(night, 30, { offS: 45, onS: 600 });
    expect(a.totalRecordingTimeMin).toBeCloseTo(9.25, 12);
    expect(a.totalSleepTimeMin).toBe(5.5);
    expect(a.sleepEfficiencyPct).toBeCloseTo((5.5 / 9.25) * 100, 10);
    expect(a.sleepOnsetLatencyMin).toBeCloseTo(1.25, 12);
    expect(a.remLatencyMin).toBe(4);
    expect(a.wasoMin).toBe(2);
    // minutes per stage stay those of the whole hypnogram
    expect(a.minutesPerStage).toEqual({ W: 5.5, N1: 0.5, N2: 3, N3: 1, R: 1.5, unscored: 0.5 });
  });

  it('lets the scored period stand in for a missing lights time, end by end', () => {
    // Lights off only (45 s): lights on = end of the last scored epoch 23 = 720 s; TRT = 675 s = 11.25 min.
    // Epochs 2..23: TST adds the N2 of epoch 21 = 6 min; WASO adds W 20, 22, 23 = 3.5 min; SOL 1.25 min.
    const off = sleepArchitecture(night, 30, { offS: 45, onS: null });
    expect(off.totalRecordingTimeMin).toBeCloseTo(11.25, 12);
    expect(off.totalSleepTimeMin).toBe(6);
    expect(off.wasoMin).toBe(3.5);
    expect(off.sleepOnsetLatencyMin).toBeCloseTo(1.25, 12);
    // Lights on only (600 s): lights off = start of the first scored epoch 0; TRT = 10 min, epochs 0..19;
    // TST 5.5 min; SOL = 120 s = 2 min; SE = 55 %.
    const on = sleepArchitecture(night, 30, { offS: null, onS: 600 });
    expect(on.totalRecordingTimeMin).toBe(10);
    expect(on.totalSleepTimeMin).toBe(5.5);
    expect(on.sleepOnsetLatencyMin).toBe(2);
    expect(on.sleepEfficiencyPct).toBeCloseTo(55, 12);
    // Both null: the same as no lights at all.
    expect(sleepArchitecture(night, 30, { offS: null, onS: null })).toEqual(sleepArchitecture(night, 30));
  });

  it('refuses lights on at or before lights off, and times that are not numbers', () => {
    expect(() => sleepArchitecture(night, 30, { offS: 600, onS: 600 })).toThrow(/lights on \(600 s\) must be after lights off \(600 s\)/);
    expect(() => sleepArchitecture(night, 30, { offS: Number.NaN, onS: 600 })).toThrow(/lights off/);
  });
});
