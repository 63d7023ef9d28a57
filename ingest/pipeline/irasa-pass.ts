/** IRASA (Wen & Liu 2016) over a second read of the recording, on request. */
import type { EdfFile } from '../edf/reader.ts';
import { Irasa, IRASA_FACTORS } from '../../src/core/spectrum/irasa.ts';
import { SCORED_STAGES } from '../../src/core/stages.ts';
import type { AperiodicRow, WarningRow } from '../store/bundle.ts';
import type { PlanState } from './epoch-pass.ts';
import { channelNote } from './grid.ts';
import type { IngestParams } from './params.ts';

/**
 * IRASA over a second read of the recording: every clean epoch of a stage is added to that
 * stage's estimator (per reference and channel), then each estimator's power-law fit becomes an
 * aperiodic row with method 'irasa'. Each channel's range is its grid's fit range (1–40 Hz with
 * fits off) capped at fs/(2·h_max); a channel whose capped range is empty gets no row, and a note.
 */
export async function irasaPass(
  edf: EdfFile,
  signals: number[],
  toUv: number[],
  states: PlanState[],
  stageIdx: Int32Array,
  epochS: number,
  params: IngestParams,
  nGrid: number,
  onEpoch: (done: number) => void,
): Promise<{ rows: AperiodicRow[]; notes: WarningRow[] }> {
  const notes: WarningRow[] = [];
  const hMax = Math.max(...(params.irasa!.resamplingFactors ?? IRASA_FACTORS));
  const estimators = states.map((st) =>
    st.outputs.map((out) => {
      const fs = out.grid.fsHz;
      const fitRange = params.fit ? out.grid.fitRange : [1, 40];
      if (!fitRange) return null; // no fit range below this channel's Nyquist: noted by its grid
      const cap = fs / (2 * hMax);
      const range: [number, number] = [fitRange[0], Math.min(fitRange[1], Math.floor(cap * 4) / 4)];
      if (!(range[1] > range[0])) {
        const message = `no IRASA estimate: the range ${fitRange[0]}–${fitRange[1]} Hz lies above fs/(2·${hMax}) = ${cap.toFixed(2)} Hz`;
        if (st.plan.reference === 'recorded') notes.push(channelNote(out.channel, fs, { step: 'irasa', field: 'irasa', message }));
        return null;
      }
      return SCORED_STAGES.map(
        () => new Irasa(fs, { segmentS: params.segmentS, overlap: params.overlap, fitRangeHz: range, resamplingFactors: params.irasa!.resamplingFactors }),
      );
    }),
  );
  for await (const block of edf.readEpochs({ signals, epochS })) {
    const e = block.epoch;
    if (e >= nGrid) break;
    if (!block.data || stageIdx[e] < 0) continue;
    const data = block.data;
    for (let c = 0; c < data.length; c++) if (toUv[c] !== 1) for (let i = 0; i < data[c].length; i++) data[c][i] *= toUv[c];
    states.forEach((st, si) => {
      const x = st.rereferencer.apply(data);
      st.outputs.forEach((out, oi) => {
        if (out.clean?.[e]) estimators[si][oi]?.[stageIdx[e]].add(x[oi], 0, out.length);
      });
    });
    if ((e & 15) === 0) onEpoch(e);
  }
  const rows: AperiodicRow[] = [];
  states.forEach((st, si) =>
    st.outputs.forEach((out, oi) =>
      SCORED_STAGES.forEach((stage, g) => {
        const est = estimators[si][oi]?.[g];
        if (!est) return;
        let fit: ReturnType<Irasa['result']>['fit'];
        try {
          fit = est.result().fit;
        } catch {
          return; // no clean epoch of this stage (or too little signal): no row, as for spectra
        }
        rows.push({
          channel: out.channel,
          stage,
          reference: st.plan.reference,
          averaging: 'mean',
          method: 'irasa',
          fitLoHz: fit.fitLoHz,
          fitHiHz: fit.fitHiHz,
          offset: fit.offset,
          exponent: fit.exponent,
          knee: 0,
          r2: fit.r2,
          rmse: fit.rmse,
          nPeaks: null,
        });
      }),
    ),
  );
  return { rows, notes };
}
