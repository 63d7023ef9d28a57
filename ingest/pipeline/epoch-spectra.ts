/**
 * The whole night of a recording as a picture (on request, params.epochSpectra): every epoch's
 * Welch spectrum of each channel of the recorded reference, from 0 Hz up to maxHz (at most the
 * channel's stored range), log10 power quantised to 16 bits (src/core/spectrum/log-quantise.ts),
 * into epoch_spectra. Epochs without data (gaps, the recording end) have no row; rejected epochs
 * keep theirs (epoch_rejections says which). Size: 2 bytes per bin plus 8 per row before
 * DuckDB's compression (README, "The database").
 */
import { bandBins } from '../../src/core/spectrum/bands.ts';
import { quantiseLog10 } from '../../src/core/spectrum/log-quantise.ts';
import type { EpochSpectraBlock } from '../store/bundle.ts';
import type { PlanState } from './epoch-pass.ts';

/** One block per channel of the recorded reference, from the epoch pass's per-epoch spectra. */
export function epochSpectraBlocks(states: readonly PlanState[], maxHz: number): EpochSpectraBlock[] {
  const blocks: EpochSpectraBlock[] = [];
  for (const st of states) {
    if (st.plan.reference !== 'recorded') continue;
    for (const out of st.outputs) blocks.push(channelBlock(out.channel, out.spectra, out.hasData, out.grid.nStored, out.grid.step, maxHz));
  }
  return blocks;
}

function channelBlock(channel: string, spectra: Float32Array, hasData: Uint8Array, nStored: number, stepHz: number, maxHz: number): EpochSpectraBlock {
  const nBins = (bandBins({ name: 'stored', loHz: 0, hiHz: maxHz }, 0, stepHz, nStored)?.last ?? 0) + 1;
  let rows = 0;
  for (let e = 0; e < hasData.length; e++) rows += hasData[e];
  const epoch = new Int32Array(rows);
  const log10Min = new Float32Array(rows);
  const log10Step = new Float32Array(rows);
  const levels = new Uint16Array(rows * nBins);
  let r = 0;
  for (let e = 0; e < hasData.length; e++) {
    if (!hasData[e]) continue;
    const q = quantiseLog10(spectra, e * nStored, nBins, levels, r * nBins);
    epoch[r] = e;
    log10Min[r] = q.lo;
    log10Step[r] = q.step;
    r++;
  }
  return { channel, reference: 'recorded', freqStartHz: 0, freqStepHz: stepHz, nBins, epoch, log10Min, log10Step, levels };
}
