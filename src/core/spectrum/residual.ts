import { aperiodicLog10, type AperiodicParams } from './aperiodic-model.ts';
import { SpectrumFitError } from './fit-error.ts';

/**
 * Residual spectrum: log10 power minus the aperiodic fit, r(f) = log10 P(f) − (b − log10(k + f^χ)),
 * in log10 units, from the stored offset, exponent and knee alone (model: aperiodic-model.ts,
 * after Donoghue et al. 2020). Frequencies in Hz (> 0), power in µV²/Hz (linear, > 0).
 */
export function residualSpectrum(
  freqsHz: ArrayLike<number>,
  power: ArrayLike<number>,
  aperiodic: AperiodicParams,
  out: Float64Array = new Float64Array(freqsHz.length),
): Float64Array {
  if (power.length !== freqsHz.length) {
    throw new SpectrumFitError(`power: length ${power.length} differs from frequencies' length ${freqsHz.length}`);
  }
  for (let i = 0; i < freqsHz.length; i++) {
    const f = freqsHz[i];
    const p = power[i];
    if (!(f > 0 && Number.isFinite(f))) throw new SpectrumFitError(`frequencies: ${f} Hz at index ${i} is not positive`);
    if (!(p > 0 && Number.isFinite(p))) throw new SpectrumFitError(`power: value ${p} at ${f} Hz is not a positive finite number (µV²/Hz)`);
    out[i] = Math.log10(p) - aperiodicLog10(f, aperiodic);
  }
  return out;
}
