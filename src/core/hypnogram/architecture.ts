/**
 * Sleep architecture from a hypnogram (pure).
 *
 * Definitions follow the summary statistics of the AASM Manual for the Scoring of Sleep and
 * Associated Events (Iber et al. 2007). The manual itself was not at hand: the wording below is
 * from memory and should be confirmed against it.
 *  - Scored period (our "time in bed", the manual's total recording time from lights off to
 *    lights on): from the first to the last epoch that carries a stage (not 'unscored').
 *    Lights off is taken as the start of that period — the recording start when scoring starts
 *    there; unscored epochs inside the period count towards it, trailing/leading ones do not.
 *  - TST = minutes of N1 + N2 + N3 + R.
 *  - SE = TST / TIB × 100 %.
 *  - Sleep onset latency = lights off to the first epoch of any sleep stage (null without sleep).
 *  - REM latency = sleep onset to the first epoch of R (null without sleep or without R).
 *  - WASO = minutes of W after sleep onset until the final awakening (the end of the last sleep
 *    epoch). Some editions instead give WASO = TRT − SOL − TST, which also counts wake after the
 *    final awakening and unscored epochs; we follow the first definition (from memory).
 */
import type { Stage } from '../stages.ts';
import { ALL_STAGES, SLEEP_STAGES } from '../stages.ts';

export interface SleepArchitecture {
  /** Minutes per stage over the whole hypnogram (every epoch, 'unscored' included). */
  minutesPerStage: Record<Stage, number>;
  timeInBedMin: number;
  totalSleepTimeMin: number;
  /** TST / TIB × 100; null when nothing was scored (TIB = 0). */
  sleepEfficiencyPct: number | null;
  sleepOnsetLatencyMin: number | null;
  remLatencyMin: number | null;
  wasoMin: number;
}

const isSleep = (s: Stage) => SLEEP_STAGES.includes(s);

/** Sleep architecture of `stages` (one per epoch of `epochS` seconds from the recording start). */
export function sleepArchitecture(stages: readonly Stage[], epochS: number): SleepArchitecture {
  if (!(epochS > 0) || !Number.isFinite(epochS)) throw new RangeError(`sleepArchitecture: epochS must be a positive number of seconds, got ${epochS}`);
  const epochMin = epochS / 60;

  const minutesPerStage = Object.fromEntries(ALL_STAGES.map((s) => [s, 0])) as Record<Stage, number>;
  for (const s of stages) {
    if (!(s in minutesPerStage)) throw new RangeError(`sleepArchitecture: '${String(s)}' is not a stage`);
    minutesPerStage[s] += epochMin;
  }

  let firstScored = -1;
  let lastScored = -1;
  let firstSleep = -1;
  let lastSleep = -1;
  let firstRem = -1;
  for (let i = 0; i < stages.length; i++) {
    const s = stages[i];
    if (s !== 'unscored') {
      if (firstScored < 0) firstScored = i;
      lastScored = i;
    }
    if (isSleep(s)) {
      if (firstSleep < 0) firstSleep = i;
      lastSleep = i;
    }
    if (s === 'R' && firstRem < 0) firstRem = i;
  }

  // TIB = (last − first + 1) scored-period epochs × epoch length.
  const timeInBedMin = firstScored < 0 ? 0 : (lastScored - firstScored + 1) * epochMin;
  // TST = N1 + N2 + N3 + R (AASM).
  const totalSleepTimeMin = minutesPerStage.N1 + minutesPerStage.N2 + minutesPerStage.N3 + minutesPerStage.R;

  let wasoEpochs = 0;
  for (let i = firstSleep; firstSleep >= 0 && i <= lastSleep; i++) if (stages[i] === 'W') wasoEpochs++;

  return {
    minutesPerStage,
    timeInBedMin,
    totalSleepTimeMin,
    sleepEfficiencyPct: timeInBedMin > 0 ? (100 * totalSleepTimeMin) / timeInBedMin : null,
    sleepOnsetLatencyMin: firstSleep < 0 ? null : (firstSleep - firstScored) * epochMin,
    remLatencyMin: firstSleep < 0 || firstRem < 0 ? null : (firstRem - firstSleep) * epochMin,
    wasoMin: wasoEpochs * epochMin,
  };
}
