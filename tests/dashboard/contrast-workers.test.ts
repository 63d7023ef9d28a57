// How many workers the contrast view starts (workers/contrast-runner.ts): two on a machine with
// two or more cores while a worker's copy (about 12 bytes per stored bin: float32 rows + float64
// matrix) stays under 200 MB, else one. Sizes from the dashboard's own cases: the demo cohort
// (35 subjects × 6 channels × 181 bins), the 2,000 × 64 synthetic database read up to 30 Hz
// (121 bins, dashboard-scale.bench.ts: two workers, 1.44 GB in the tab), and 10,000 recordings.
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { ContrastData } from '../../src/core/contrast/data.ts';
import { contrastWorkerCount } from '../../src/dashboard/workers/contrast-runner.ts';

const sized = (rows: number, nBins: number) => ({ spectra: { rows: { length: rows }, nBins } }) as unknown as ContrastData;

describe('contrast workers', () => {
  afterEach(() => vi.unstubAllGlobals());

  it('two workers on two cores for the demo and for 2,000 recordings × 64 channels × 121 bins', () => {
    vi.stubGlobal('navigator', { hardwareConcurrency: 2 });
    expect(contrastWorkerCount(sized(35 * 6, 181))).toBe(2);
    expect(contrastWorkerCount(sized(2000 * 64, 121))).toBe(2);
  });

  it('one worker when the copy passes 200 MB (10,000 recordings × 64 × 121: 929 MB) or on one core', () => {
    vi.stubGlobal('navigator', { hardwareConcurrency: 2 });
    expect(contrastWorkerCount(sized(10_000 * 64, 121))).toBe(1);
    // just above the limit: 200 MiB / 12 bytes
    expect(contrastWorkerCount(sized(Math.ceil((200 * 2 ** 20) / 12 / 121) + 1, 121))).toBe(1);
    vi.stubGlobal('navigator', { hardwareConcurrency: 1 });
    expect(contrastWorkerCount(sized(35 * 6, 181))).toBe(1);
  });
});
