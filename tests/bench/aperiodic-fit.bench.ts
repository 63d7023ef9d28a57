/**
 * Aperiodic + peak fit time per spectrum (issue 4 target: under 2 ms on one core): 500 seeded
 * simulated spectra at 2-hour N2 noise (tests/aperiodic/simulated-cases.ts), 0.25-Hz bins, fit
 * range 1–40 Hz (157 bins), each fitted in power-law mode (the default) and in knee mode.
 * Reports median and 95th percentile wall time per spectrum, the mean CPU time (less sensitive
 * to other processes on a shared machine) and the load average during the run.
 */
import { loadavg } from 'node:os';
import { fitSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { EPOCHS_2H_N2, SEGMENTS_PER_EPOCH, effectiveSegments, simulatedCase } from '../aperiodic/simulated-cases.ts';

const SPECTRA = 500;

function quantile(sorted: Float64Array, p: number): number {
  // R-7 linear interpolation (Hyndman & Fan 1996)
  const h = (sorted.length - 1) * p;
  const i = Math.floor(h);
  return i + 1 < sorted.length ? sorted[i] + (h - i) * (sorted[i + 1] - sorted[i]) : sorted[i];
}

export async function run(): Promise<Record<string, unknown>> {
  const nAveraged = Math.round(effectiveSegments(SEGMENTS_PER_EPOCH, EPOCHS_2H_N2));
  const cases = Array.from({ length: SPECTRA }, (_, i) => simulatedCase(10_000 + i, nAveraged));
  const result: Record<string, unknown> = { spectra: SPECTRA, bins: 157, fitRangeHz: [1, 40], nAveraged, loadAverage1mStart: loadavg()[0] };
  for (const mode of ['power-law', 'knee'] as const) {
    for (let i = 0; i < 50; i++) fitSpectrum(cases[i].freqsHz, cases[i].power, { aperiodicForm: mode }); // warm-up
    const times = new Float64Array(SPECTRA);
    let peaks = 0;
    const cpu0 = process.cpuUsage();
    for (let i = 0; i < SPECTRA; i++) {
      const t0 = performance.now();
      const fit = fitSpectrum(cases[i].freqsHz, cases[i].power, { aperiodicForm: mode });
      times[i] = performance.now() - t0;
      peaks += fit.peaks.length;
    }
    const cpu = process.cpuUsage(cpu0);
    times.sort();
    result[mode] = {
      medianMs: quantile(times, 0.5),
      p95Ms: quantile(times, 0.95),
      maxMs: times[SPECTRA - 1],
      meanCpuMs: (cpu.user + cpu.system) / 1000 / SPECTRA,
      meanPeaksPerSpectrum: peaks / SPECTRA,
    };
  }
  result.loadAverage1mEnd = loadavg()[0];
  return result;
}
