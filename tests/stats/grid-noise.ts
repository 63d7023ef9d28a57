import { Random } from '../../src/core/stats/random.ts';

/**
 * Smooth, correlated noise on a channel × frequency grid for the statistical validations: per
 * subject, white Gaussian noise is averaged over 5 neighbouring bins (correlation across
 * frequency) and each channel is mixed with the mean of its graph neighbours (weight 0.6,
 * correlation across space). Returns subjects × (channels × bins), row-major.
 */
export function gridNoise(nSubjects: number, nChannels: number, nFreqs: number, neighbours: number[][], rng: Random): Float64Array {
  const P = nChannels * nFreqs;
  const out = new Float64Array(nSubjects * P);
  const smooth = new Float64Array(P);
  const white = new Float64Array(nFreqs + 4);
  for (let s = 0; s < nSubjects; s++) {
    for (let c = 0; c < nChannels; c++) {
      for (let i = 0; i < white.length; i++) white[i] = rng.normal();
      for (let f = 0; f < nFreqs; f++) smooth[c * nFreqs + f] = (white[f] + white[f + 1] + white[f + 2] + white[f + 3] + white[f + 4]) / Math.sqrt(5);
    }
    for (let c = 0; c < nChannels; c++) {
      const nb = neighbours[c];
      for (let f = 0; f < nFreqs; f++) {
        let m = 0;
        for (const d of nb) m += smooth[d * nFreqs + f];
        out[s * P + c * nFreqs + f] = smooth[c * nFreqs + f] + (nb.length > 0 ? (0.6 * m) / nb.length : 0);
      }
    }
  }
  return out;
}
