// A BDF+ copy of an EDF+ recording gives the same stored spectra. Both files are written by
// Debian's libedf (EDFlib 1.23: EDFLIB_FILETYPE_EDFPLUS and EDFLIB_FILETYPE_BDFPLUS, edflib.h) from
// the same physical values and the same stage annotations; the recording goes through the ingest
// pipeline (processRecording) once as EDF+ and once as BDF+, with the same epochs and rejections.
// The decoded signals differ by d = EDF − BDF with |d| < one EDF step + one BDF step (each file
// within one digital step of the values given, tests/edf/bdf.test.ts). Bound on the spectra, per
// frequency bin (no assumption on the shape of d):
//   - Parseval for a Welch density spectrum: Σ P_d(f)·Δf = Σ(d·w)²/Σw² ≤ max d², so every bin of
//     the difference's spectrum P_d(f) ≤ Dmax = max d²/Δf;
//   - |B+D|² − |B|² = 2·Re(B·D*) + |D|², and Cauchy–Schwarz on the average over segments and
//     epochs: |P_edf − P_bdf| ≤ 2·sqrt(P_bdf·Dmax) + Dmax for mean spectra;
//   - a median over n epochs moves by at most the largest single-epoch change, and one epoch's
//     spectrum is at most n times the mean: bound 2·sqrt(n·P_mean·Dmax) + Dmax.
// EDFlib truncates to the digital grid (measured: error variance step²/3), so the error is not
// white: a closer, noise-model bound would not hold. Size: 4 channels × 128 Hz × 20 epochs of
// 30 s; about 2 s.
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import { compileWithLibedf, writerSource, type RefAnnotation, type RefSignal } from './libedf.ts';
import { makeTmpDir } from './helpers.ts';

const FS_HZ = 128;
const STAGES = ['W', 'W', 'W', 'W', 'W', 'W', '2', '2', '2', '2', '2', '2', '2', '2', '3', '3', '3', '3', '3', '3'];
const SECONDS = 30 * STAGES.length;

/** EEG in µV: a rhythm per channel, a slow wave, and uniform integer-hash noise of ±50 µV (unsigned overflow is defined in C). */
function channel(label: string, k: number, bits: 16 | 24): RefSignal {
  const dmax = bits === 16 ? 32767 : 8388607;
  const noise = `((double)((((unsigned)i * 2654435761u) ^ ${40503 * (k + 1)}u) % 2001u) / 20.0 - 50.0)`;
  return {
    label,
    dim: 'uV',
    pmin: -500,
    pmax: 500,
    dmin: -dmax,
    dmax,
    fs: FS_HZ,
    expr: `${20 + 5 * k}.0*sin(2*M_PI*${9 + k}.5*t) + 30.0*sin(2*M_PI*0.8*t + ${k}.0) + ${noise}`,
  };
}
const LABELS = ['EEG F3-M2', 'EEG C3-M2', 'EEG C4-M1', 'EEG O2-M1'];
const ANNOTATIONS: RefAnnotation[] = STAGES.map((s, e) => ({ onset100us: e * 300000, duration100us: 300000, text: `Sleep stage ${s}` }));

let tmp: ReturnType<typeof makeTmpDir>;
const files: Record<16 | 24, string> = { 16: '', 24: '' };
beforeAll(() => {
  tmp = makeTmpDir('bdf-pipeline');
  for (const bits of [16, 24] as const) {
    const fileType = bits === 16 ? 'EDFLIB_FILETYPE_EDFPLUS' : 'EDFLIB_FILETYPE_BDFPLUS';
    const exe = compileWithLibedf(
      tmp.dir,
      `writer${bits}`,
      writerSource(
        LABELS.map((l, k) => channel(l, k, bits)),
        ANNOTATIONS,
        SECONDS,
        'X',
        { fileType },
      ),
    );
    files[bits] = join(tmp.dir, bits === 16 ? 'night.edf' : 'night.bdf');
    execFileSync(exe, [files[bits], join(tmp.dir, `night${bits}.raw`)]);
  }
});
afterAll(() => tmp?.cleanup());

const recording = (path: string): CohortRecording => ({
  row: 1,
  subject: 's1',
  session: null,
  group: null,
  recordingPath: path,
  scoringPath: null,
  covariates: {},
});

describe('processRecording on an EDF+ recording and its BDF+ copy', () => {
  it('stores the same spectra (within the EDF rounding), epochs and rejections', async () => {
    const params = resolveIngestParams({ fit: null, minEpochs: 2 });
    const edf = await processRecording(recording(files[16]), params);
    const bdf = await processRecording(recording(files[24]), params);
    expect([edf.recording.edfVariant, bdf.recording.edfVariant]).toEqual(['EDF+C', 'BDF+C']);
    expect(bdf.recording.durationS).toBe(edf.recording.durationS);
    const key = (s: { channel: string; stage: string; reference: string; averaging: string }) => `${s.channel}|${s.stage}|${s.reference}|${s.averaging}`;
    expect(bdf.spectra.map(key).sort()).toEqual(edf.spectra.map(key).sort());
    // 4 channels × 3 stages, each averaging kind the pipeline stores
    expect(new Set(edf.spectra.filter((s) => s.averaging === 'mean').map((s) => `${s.channel}|${s.stage}`)).size).toBe(12);
    const byKey = new Map(bdf.spectra.map((s) => [key(s), s]));
    const maxDiffUv = 1000 / 65534 + 1000 / 16777214; // one EDF step + one BDF step
    let worstOfBound = 0;
    let worstMeanRel = 0;
    for (const a of edf.spectra) {
      const b = byKey.get(key(a))!;
      const bMean = byKey.get(key({ ...a, averaging: 'mean' }))!;
      expect([b.nEpochs, b.nSegments, b.freqStartHz, b.freqStepHz, b.power.length]).toEqual([
        a.nEpochs,
        a.nSegments,
        a.freqStartHz,
        a.freqStepHz,
        a.power.length,
      ]);
      const dMax = (maxDiffUv * maxDiffUv) / a.freqStepHz; // µV²/Hz
      for (let i = 0; i < a.power.length; i++) {
        const p = a.averaging === 'mean' ? b.power[i] : b.nEpochs * bMean.power[i];
        const bound = 2 * Math.sqrt(p * dMax) + dMax;
        worstOfBound = Math.max(worstOfBound, Math.abs(a.power[i] - b.power[i]) / bound);
        if (a.averaging === 'mean' && i > 0) worstMeanRel = Math.max(worstMeanRel, Math.abs(a.power[i] - b.power[i]) / a.power[i]);
      }
    }
    console.log(
      `EDF+ vs BDF+ spectra: largest difference ${worstOfBound.toFixed(3)} of its bound; mean spectra ${worstMeanRel.toExponential(2)} relative (above 0 Hz)`,
    );
    expect(worstOfBound).toBeLessThanOrEqual(1);
    expect(worstMeanRel).toBeGreaterThan(0); // the two files really differ (16- vs 24-bit rounding)
    const rej = (x: typeof edf) => x.rejections.map((r) => `${r.channel}|${r.reference}|${r.epoch}|${r.reason}`).sort();
    expect(rej(bdf)).toEqual(rej(edf));
  });
});
