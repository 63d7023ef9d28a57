// A contrast split over threads as the dashboard's two workers run it (prepareCompare on each,
// permutationShare ranges, finishCompare with the joined null maxima) gives the single-thread
// compare() result exactly (JSON equal), also when the second thread gets its rows through a
// structured clone as a Web Worker does. Size: 24 subjects (12 vs 12) × 4 channels × 0.5–30 Hz,
// 500 permutations, cluster mass and TFCE.
import { describe, expect, it } from 'vitest';
import type { ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { compare, finishCompare, permutationShare, prepareCompare } from '../../src/core/contrast/run.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { concatNullMaxima, runPermutations } from '../../src/core/stats/index.ts';
import { Random } from '../../src/core/stats/random.ts';

const CHANNELS = ['F3', 'C3', 'C4', 'P3'];

/** 1/f spectra with noise, group "b" with 1.5× power at 12–15 Hz over C3, C4, P3. */
function cohort(nPerGroup: number): ContrastData {
  const rng = new Random(5);
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 2 * nPerGroup; s++) {
    const subject = `s${String(s).padStart(2, '0')}`;
    const group = s < nPerGroup ? 'a' : 'b';
    participants.push({ subject, group });
    const level = Math.exp(0.2 * rng.normal());
    for (const channel of CHANNELS) {
      const power = new Float32Array(121);
      for (let k = 0; k < 121; k++) {
        const f = Math.max(k * 0.25, 0.25);
        power[k] = ((100 * level) / f) * (group === 'b' && channel !== 'F3' && f >= 12 && f <= 15 ? 1.5 : 1) * Math.exp(0.1 * rng.normal());
      }
      rows.push({ subject, session: null, channel, stage: 'N2', nEpochs: 60, flagged: false, flagReason: null, power });
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: 0.25, nBins: 121, rows }, aperiodic: [], peaks: [], participants, exclusions: [] };
}

describe('a contrast split over two threads', () => {
  it('permutation shares cover [0, count) without gaps', () => {
    for (const parts of [1, 2, 3]) {
      const shares = Array.from({ length: parts }, (_, i) => permutationShare(1001, i, parts));
      expect(shares[0].from).toBe(0);
      expect(shares[parts - 1].to).toBe(1001);
      for (let i = 1; i < parts; i++) expect(shares[i].from).toBe(shares[i - 1].to);
    }
  });

  for (const correction of ['cluster-mass', 'tfce'] as const) {
    it(`${correction}: equals the single-thread result`, () => {
      const c = parseContrast({ design: 'groups', groups: ['a', 'b'], fminHz: 0.5, fmaxHz: 30, correction, permutations: 500, seed: 3 });
      const data = cohort(12);
      const single = compare(c, data);
      const parts = [prepareCompare(c, data), prepareCompare(c, structuredClone(data))];
      const count = parts[0].prepared.test.scheme.count;
      const nulls = parts.map((p, i) => runPermutations(p.prepared.test, permutationShare(count, i, 2)));
      const split = finishCompare(parts[0], concatNullMaxima(nulls.reverse()));
      expect(JSON.stringify(split)).toBe(JSON.stringify(single));
      // the contrast finds the planted effect, so the comparison is not between empty results
      expect(single.clusters.length + (single.statistics.tfce ? 1 : 0)).toBeGreaterThan(0);
      expect(Math.min(...single.statistics.pUncorrected)).toBeLessThan(0.001);
    });
  }
});
