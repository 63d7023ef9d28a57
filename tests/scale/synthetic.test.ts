import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readHeaderStorageNumber } from '../../ingest/store/database.ts';
import { writeSyntheticDatabase } from '../../src/simulation/synthetic-store.ts';
import { drawRecording, STAGE_MODELS, syntheticSpec } from '../../src/core/simulate/synthetic-database.ts';
import { runPython } from '../helpers/python.ts';
import { queryRows } from './helpers.ts';

// A small synthetic database: 20 recordings × 4 channels × 5 stages × 181 bins (400 spectra).
const dir = mkdtempSync(path.join(tmpdir(), 'bw-syn-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const spec = syntheticSpec({ recordings: 20, channelCount: 4, seed: 3 });

describe('synthetic database', () => {
  it('writes every recording × channel × stage spectrum with its true aperiodic parameters, readable storage', async () => {
    const file = path.join(dir, 'syn.duckdb');
    const r = await writeSyntheticDatabase(file, spec, { batch: 7 });
    expect(r).toMatchObject({ recordings: 20, spectraRows: 400 });
    expect(readHeaderStorageNumber(file)).toBeLessThanOrEqual(67); // v1.4 for duckdb-wasm (DuckDB storage docs)
    const counts = await queryRows(
      file,
      `SELECT (SELECT count(*)::INTEGER FROM recordings) AS rec, (SELECT count(*)::INTEGER FROM spectra) AS sp,
      (SELECT count(*)::INTEGER FROM aperiodic) AS ap, (SELECT count(*)::INTEGER FROM channels) AS ch, (SELECT count(*)::INTEGER FROM participants) AS pa,
      (SELECT count(*)::INTEGER FROM spectra WHERE n_bins <> 181 OR len(power) <> 181 OR power[1] <> 0 OR list_min(power[2:]) <= 0) AS odd`,
    );
    expect(counts).toEqual([{ rec: 20, sp: 400, ap: 400, ch: 80, pa: 20, odd: 0 }]);
    // the stored spectra are the pure draw, whatever the batch size and order
    const again = drawRecording(spec, 13);
    const stored = await queryRows(
      file,
      `SELECT s.power FROM spectra s JOIN recordings r USING (recording_id) WHERE r.subject = 'syn00014' AND s.channel = '${spec.channels[2]}' AND s.stage = 'N2'`,
    );
    expect(Float32Array.from(stored[0].power as number[])).toEqual(again.power.subarray((2 * 5 + 2) * 181, (2 * 5 + 3) * 181));
    const groups = await queryRows(file, `SELECT "group", count(*)::INTEGER AS n FROM participants GROUP BY ALL ORDER BY 1`);
    expect(groups).toEqual([
      { group: 'control', n: 10 },
      { group: 'patient', n: 10 },
    ]);
  });

  it('spectra scatter around the model 10^L(f) as numpy evaluates it, with the Welch-average noise (Gamma(n, 1/n))', () => {
    const rec = drawRecording(spec, 4);
    const s = 2; // N2, with the sigma peak
    const n = 1.9 * spec.segmentsPerEpoch * rec.nEpochs[s];
    const model = STAGE_MODELS.N2;
    const power = Array.from(rec.power.subarray((0 * 5 + s) * 181, (0 * 5 + s + 1) * 181));
    // Outside reference: numpy evaluates L(f) = b − log10(f^χ) + h·exp(−(f − c)²/(2w²)) (Donoghue et al. 2020);
    // power/model has mean 1 and SD 1/sqrt(n) per bin (Gamma(n, 1/n); Percival & Walden 1993 §6.6).
    const out = runPython<{ mean: number; sd: number }>(
      `p = numpy.fromfile(inputs['p'])[1:]
f = numpy.arange(1, 181) * 0.25
b, chi, h, c, w = numpy.fromfile(inputs['m'])
L = b - numpy.log10(f ** chi) + h * numpy.exp(-(f - c) ** 2 / (2 * w ** 2))
q = p / 10 ** L
print(json.dumps({'mean': float(q.mean()), 'sd': float(q.std(ddof=1))}))`,
      {
        p: power,
        m: [
          rec.offset[s],
          rec.exponent[s],
          model.peaks[0].height + (rec.index % 2 ? spec.effect.sigmaHeightLog10 : 0),
          model.peaks[0].centerHz,
          model.peaks[0].widthHz,
        ],
      },
    );
    // 180 bins: the mean of the ratio is within 4 standard errors of 1, its SD within 25 % of 1/sqrt(n) (float32 rounding is far smaller)
    expect(Math.abs(out.mean - 1)).toBeLessThan(4 / Math.sqrt(n * 180));
    expect(out.sd * Math.sqrt(n)).toBeGreaterThan(0.75);
    expect(out.sd * Math.sqrt(n)).toBeLessThan(1.25);
  });

  it('refuses an existing file and bad sizes', async () => {
    await expect(writeSyntheticDatabase(path.join(dir, 'syn.duckdb'), spec)).rejects.toThrow(/exists already/);
    expect(() => syntheticSpec({ channelCount: 65 })).toThrow(/channelCount must be 1–64, got 65/);
    expect(() => syntheticSpec({ recordings: 0 })).toThrow(/recordings must be a whole number ≥ 1, got 0/);
  });
});
