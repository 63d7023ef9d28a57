/**
 * The per-point TSV of `compare --points-tsv` writes a missing value (a point left out for too
 * few values: its statistic, p and effect are NaN in the result) as NA, the missing-value token
 * R's read.delim reads by default (na.strings = "NA"; R documentation of read.table) and pandas'
 * read_csv counts among its default NA values, never as the string "NaN". Outside reference:
 * numpy.genfromtxt with NA declared missing reads the file back to NaN exactly at the left-out
 * points and to the result's numbers (as rounded in the file) elsewhere. Data: invented, 5 + 5
 * subjects, a sigma peak on C3 in every subject, none on M2 (so M2 is left out).
 */
import { describe, expect, it } from 'vitest';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import type { ContrastData, PeakRow, SpectrumRow } from '../../src/core/contrast/data.ts';
import type { CompareRun } from '../../src/analysis/compare-runner.ts';
import { pointsTsv } from '../../src/cli/compare.ts';
import { runPython } from '../helpers/python.ts';

function cohort(): ContrastData {
  const rows: SpectrumRow[] = [];
  const peaks: PeakRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 10; s++) {
    const subject = `s${s}`;
    participants.push({ subject, group: s < 5 ? 'control' : 'patient' });
    for (const channel of ['C3', 'M2']) {
      const key = { subject, session: null, channel, stage: 'N2' as const };
      rows.push({ ...key, nEpochs: 60, flagged: false, flagReason: null, power: new Float32Array(60).fill(1) });
      // invented centres: controls near 13.5 Hz, patients near 12.5 Hz
      if (channel === 'C3') peaks.push({ ...key, centerHz: (s < 5 ? 13.5 : 12.5) + 0.1 * (((s * 7) % 5) - 2), height: 0.5, bandwidthHz: 2 });
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: 0.5, nBins: 60, rows }, aperiodic: [], peaks, participants, exclusions: [] };
}

describe('compare --points-tsv with missing values', () => {
  const result = compare(
    parseContrast({
      design: 'groups',
      groups: ['control', 'patient'],
      stage: 'N2',
      measure: 'peak-center',
      bands: [{ name: 'sigma', loHz: 11, hiHz: 16 }],
      permutations: 200,
      seed: 3,
    }),
    cohort(),
  );
  const tsv = pointsTsv({ ...result, database: { file: 'x.duckdb', runId: 'r', toolVersion: '0', ingestParameters: {} } } as CompareRun);

  it('writes NA for a left-out point, never NaN, and numpy reads it back as missing', () => {
    expect(result.valuesPerPoint!.map((p) => [p.channel, p.leftOut])).toEqual([
      ['C3', false],
      ['M2', true],
    ]);
    expect(Number.isNaN(result.statistics.stat[1])).toBe(true); // the result itself keeps NaN
    const fields = tsv
      .trim()
      .split('\n')
      .slice(1)
      .flatMap((l) => l.split('\t'));
    expect(fields.filter((f) => /nan|infinity/i.test(f))).toEqual([]);
    const lines = tsv.trim().split('\n');
    const header = lines[0].split('\t');
    const m2 = Object.fromEntries(lines[2].split('\t').map((v, i) => [header[i], v]));
    expect(m2).toMatchObject({ channel: 'M2', stat: 'NA', p_uncorrected: 'NA', ci_low: 'NA', ci_high: 'NA' });
    const read = runPython<(number | null)[][]>(
      `import io
a = numpy.genfromtxt(io.StringIO(${JSON.stringify(tsv)}), delimiter='\\t', skip_header=1, missing_values='NA', filling_values=numpy.nan, usecols=(2, 3, 4, 5, 6, 7))
print(json.dumps([[None if numpy.isnan(v) else float(v) for v in row] for row in a]))`,
    );
    // C3: every number as the result has it (rounded as written); M2: all missing
    const s = result.statistics;
    expect(read[0][0]).toBeCloseTo(s.stat[0], 4);
    expect(read[0][2]).toBeCloseTo(s.pUncorrected[0], 4);
    expect(read[0][3]).toBeCloseTo(s.effect.value[0], 4);
    expect(read[1].filter((v) => v !== null)).toEqual([]);
  });
});
