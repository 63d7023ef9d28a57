/**
 * Sleep architecture from a hypnogram (pure).
 *
 * Definitions follow the summary statistics of the AASM Manual for the Scoring of Sleep and
 * Associated Events (Iber et al. 2007). The manual itself was not at hand: the wording below is
 * from memory and should be confirmed against it.
 *  - Total recording time (TRT) = lights off to lights on, in minutes (exact times).
 *  - Stage times count the epochs lying wholly between lights off and lights on; an epoch cut by
 *    lights off or on belongs to neither side (its part inside counts in TRT only).
 *  - TST = minutes of N1 + N2 + N3 + R between lights off and on.
 *  - SE = TST / TRT × 100 %.
 *  - Sleep onset latency = lights off to the start of the first epoch of any sleep stage (null
 *    without sleep).
 *  - REM latency = sleep onset to the first epoch of R (null without sleep or without R).
 *  - WASO = minutes of W after sleep onset, before lights on (wake after the final awakening
 *    included; unscored epochs are not wake and do not count).
 * Without a lights time, the scored period stands in for it, end by end: lights off = the start
 * of the first epoch that carries a stage (not 'unscored'), lights on = the end of the last one.
 */
import type { Stage } from '../stages.ts';
import { ALL_STAGES, SLEEP_STAGES } from '../stages.ts';

/** Lights off and on in seconds from the start of epoch 0; null where not known. */
export interface LightsTimes {
  offS: number | null;
  onS: number | null;
}

export interface SleepArchitecture {
  /** Minutes per stage over the whole hypnogram (every epoch, 'unscored' included). */
  minutesPerStage: Record<Stage, number>;
  /** Lights off to lights on (or the scored period standing in), minutes. */
  totalRecordingTimeMin: number;
  totalSleepTimeMin: number;
  /** TST / TRT × 100; null when TRT is 0 (nothing scored). */
  sleepEfficiencyPct: number | null;
  sleepOnsetLatencyMin: number | null;
  remLatencyMin: number | null;
  wasoMin: number;
}

const isSleep = (s: Stage) => SLEEP_STAGES.includes(s);

/** Times closer than this are equal: 100 µs, the EDF+ annotation resolution of EDFlib (common practice). */
const TOL_S = 1e-4;

/**
 * Sleep architecture of `stages` (one per epoch of `epochS` seconds from the recording start),
 * between `lights` off and on when given.
 */
export function sleepArchitecture(stages: readonly Stage[], epochS: number, lights: LightsTimes | null = null): SleepArchitecture {
  if (!(epochS > 0) || !Number.isFinite(epochS)) throw new RangeError(`sleepArchitecture: epochS must be a positive number of seconds, got ${epochS}`);
  for (const [name, t] of [
    ['lights off', lights?.offS ?? null],
    ['lights on', lights?.onS ?? null],
  ] as const) {
    if (t !== null && !Number.isFinite(t)) throw new RangeError(`sleepArchitecture: ${name} must be a number of seconds, got ${t}`);
  }
  const epochMin = epochS / 60;

  const minutesPerStage = Object.fromEntries(ALL_STAGES.map((s) => [s, 0])) as Record<Stage, number>;
  let firstScored = -1;
  let lastScored = -1;
  for (let i = 0; i < stages.length; i++) {
    const s = stages[i];
    if (!(s in minutesPerStage)) throw new RangeError(`sleepArchitecture: '${String(s)}' is not a stage`);
    minutesPerStage[s] += epochMin;
    if (s !== 'unscored') {
      if (firstScored < 0) firstScored = i;
      lastScored = i;
    }
  }

  // Lights off/on, s; the scored period stands in for a missing end.
  const offS = lights?.offS ?? (firstScored < 0 ? 0 : firstScored * epochS);
  const onS = lights?.onS ?? (firstScored < 0 ? 0 : (lastScored + 1) * epochS);
  if (lights && (lights.offS !== null || lights.onS !== null) && !(onS > offS)) {
    throw new RangeError(`sleepArchitecture: lights on (${onS} s) must be after lights off (${offS} s)`);
  }
  // Epochs wholly inside [offS, onS]: from the first starting at or after lights off to the last ending at or before lights on.
  const from = Math.max(0, Math.ceil((offS - TOL_S) / epochS));
  const to = Math.min(stages.length, Math.floor((onS + TOL_S) / epochS));

  let firstSleep = -1;
  let firstRem = -1;
  let sleepEpochs = 0;
  let wasoEpochs = 0;
  for (let i = from; i < to; i++) {
    const s = stages[i];
    if (isSleep(s)) {
      sleepEpochs++;
      if (firstSleep < 0) firstSleep = i;
    }
    if (firstSleep >= 0 && s === 'W') wasoEpochs++;
    if (firstSleep >= 0 && s === 'R' && firstRem < 0) firstRem = i;
  }

  // TRT = lights on − lights off (AASM).
  const totalRecordingTimeMin = (onS - offS) / 60;
  // TST = N1 + N2 + N3 + R between lights off and on (AASM).
  const totalSleepTimeMin = sleepEpochs * epochMin;
  return {
    minutesPerStage,
    totalRecordingTimeMin,
    totalSleepTimeMin,
    // SE = TST / TRT × 100 (AASM).
    sleepEfficiencyPct: totalRecordingTimeMin > 0 ? (100 * totalSleepTimeMin) / totalRecordingTimeMin : null,
    // Sleep latency = lights off to the first epoch of sleep (AASM).
    sleepOnsetLatencyMin: firstSleep < 0 ? null : (firstSleep * epochS - offS) / 60,
    // REM latency = sleep onset to the first epoch of R (AASM).
    remLatencyMin: firstSleep < 0 || firstRem < 0 ? null : (firstRem - firstSleep) * epochMin,
    wasoMin: wasoEpochs * epochMin,
  };
}
