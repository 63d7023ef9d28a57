import { describe, expect, it } from 'vitest';
import { sleepArchitecture } from '../../src/core/hypnogram/architecture.ts';
import type { Stage } from '../../src/core/stages.ts';

// Definitions: AASM Manual for the Scoring of Sleep and Associated Events (Iber et al. 2007),
// summary statistics — TST = N1+N2+N3+R; SE = TST / time in bed × 100; sleep latency = lights
// off to the first epoch of any sleep; REM latency = sleep onset to the first epoch of R;
// WASO = wake after sleep onset until the final awakening (wording from memory, see architecture.ts).

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
    // WASO = W epochs inside 3..16 (last sleep) = epochs 6 and 15 = 1.0 min (17, 18 are after the final awakening)
    const s = 'W W W N1 N2 N2 W N2 N3 N3 N2 R R - N2 W R W W -'.split(' ').map((x) => (x === '-' ? 'unscored' : x)) as Stage[];
    const a = sleepArchitecture(s, 30);
    expect(a.minutesPerStage).toEqual({ W: 3.5, N1: 0.5, N2: 2.5, N3: 1, R: 1.5, unscored: 1 });
    expect(a.totalSleepTimeMin).toBe(5.5);
    expect(a.timeInBedMin).toBe(9.5);
    expect(a.sleepEfficiencyPct).toBeCloseTo((5.5 / 9.5) * 100, 10);
    expect(a.sleepOnsetLatencyMin).toBe(1.5);
    expect(a.remLatencyMin).toBe(4);
    expect(a.wasoMin).toBe(1);
  });

  it('takes lights off as the first scored epoch when scoring starts late', () => {
    // unscored unscored W W N1 N2 W (30-s epochs):
    // scored period epochs 2..6 = 5 epochs = 2.5 min; TST = N1 + N2 = 1.0 min; SE = 40 %;
    // SOL = epoch 4 − epoch 2 = 1.0 min; no R → REM latency null; WASO 0 (epoch 6 is after the last sleep).
    const a = sleepArchitecture(['unscored', 'unscored', 'W', 'W', 'N1', 'N2', 'W'], 30);
    expect(a.timeInBedMin).toBe(2.5);
    expect(a.totalSleepTimeMin).toBe(1);
    expect(a.sleepEfficiencyPct).toBeCloseTo(40, 12);
    expect(a.sleepOnsetLatencyMin).toBe(1);
    expect(a.remLatencyMin).toBeNull();
    expect(a.wasoMin).toBe(0);
  });

  it('uses the epoch length given (20-s epochs)', () => {
    // N2 R W N2: 4 epochs × 20 s = 80 s = 1.3333 min TIB; TST 3 × 20 s = 1 min; SOL 0; REM latency 20 s; WASO 20 s.
    const a = sleepArchitecture(['N2', 'R', 'W', 'N2'], 20);
    expect(a.timeInBedMin).toBeCloseTo(80 / 60, 12);
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
    expect(none.timeInBedMin).toBe(0);
    expect(none.sleepEfficiencyPct).toBeNull();
    expect(none.minutesPerStage.unscored).toBe(1);
    expect(() => sleepArchitecture(['W'], 0)).toThrow(/epochS/);
    expect(() => sleepArchitecture(['X' as Stage], 30)).toThrow(/'X' is not a stage/);
  });
});
