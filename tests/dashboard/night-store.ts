/**
 * A small synthetic store for the whole-night view: one recording of 20 epochs of 30 s, channel
 * C3 with epoch spectra from 0 to 30 Hz at 0.25 Hz (121 bins) for every epoch but 10 and 11 (a
 * gap: no row), channel O1 without any. Power is an invented 1/f² background (µV²/Hz) with a
 * peak at 13.5 Hz, 10,000 times the background (above every other value), in epochs 4–7; stored through the same quantiser
 * (src/core/spectrum/log-quantise.ts) and appender (ingest/store/epoch-spectra-rows.ts) ingest uses.
 */
import path from 'node:path';
import { openStore } from '../../ingest/store/index.ts';
import { appendEpochSpectra } from '../../ingest/store/epoch-spectra-rows.ts';
import { quantiseLog10 } from '../../src/core/spectrum/log-quantise.ts';
import type { EpochRow } from '../../src/queries/quality.ts';

export const NIGHT_RECORDING = 'rec-night-01';
export const N_EPOCHS = 20;
export const N_BINS = 121;
export const STEP_HZ = 0.25;
export const GAP = [10, 11];
export const PEAK_EPOCHS = [4, 5, 6, 7];
export const PEAK_BIN = 54; // 13.5 Hz
/** Epochs rejected on C3 (as epoch_rejections would say). */
export const REJECTED = new Map([
  [2, 'amplitude'],
  [3, 'amplitude'],
  [15, 'muscle-outlier'],
]);

/** Full-precision power of epoch e, bin b (µV²/Hz). */
export function nightPower(e: number, b: number): number {
  const f = Math.max(b * STEP_HZ, 0.5);
  const background = (400 / f ** 2) * (1 + 0.3 * Math.sin(e + b / 7));
  return PEAK_EPOCHS.includes(e) && b === PEAK_BIN ? 1e4 * background : background;
}

/** The recording's epochs with their stages and C3's rejections (what recordingEpochs returns). */
export function nightEpochs(): EpochRow[] {
  const stages = ['W', 'N1', 'N2', 'N2', 'N2', 'N2', 'N2', 'N2', 'N3', 'N3', 'N3', 'N3', 'N2', 'R', 'R', 'R', 'N2', 'N2', 'W', 'W'];
  return stages.map((stage, e) => ({ epoch: e, onsetS: 30 * e, stage, reasons: REJECTED.get(e) ?? '' }));
}

/** Writes the store into `dir`; returns its path. */
export async function writeNightStore(dir: string): Promise<string> {
  const file = path.join(dir, 'night.duckdb');
  const epochs = Array.from({ length: N_EPOCHS }, (_, e) => e).filter((e) => !GAP.includes(e));
  const power = new Float64Array(epochs.length * N_BINS);
  epochs.forEach((e, r) => {
    for (let b = 0; b < N_BINS; b++) power[r * N_BINS + b] = nightPower(e, b);
  });
  const levels = new Uint16Array(epochs.length * N_BINS);
  const log10Min = new Float32Array(epochs.length);
  const log10Step = new Float32Array(epochs.length);
  for (let r = 0; r < epochs.length; r++) {
    const q = quantiseLog10(power, r * N_BINS, N_BINS, levels, r * N_BINS);
    log10Min[r] = q.lo;
    log10Step[r] = q.step;
  }
  const store = await openStore(file, { create: true });
  try {
    await store.exclusive(() =>
      appendEpochSpectra(store.connection, NIGHT_RECORDING, [
        {
          channel: 'C3',
          reference: 'recorded',
          freqStartHz: 0,
          freqStepHz: STEP_HZ,
          nBins: N_BINS,
          epoch: Int32Array.from(epochs),
          log10Min,
          log10Step,
          levels,
        },
      ]),
    );
  } finally {
    await store.close();
  }
  return file;
}
