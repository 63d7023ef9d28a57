/** Bad input to the aperiodic/peak fit, IRASA or the resampler; the message names the field and value. */
export class SpectrumFitError extends Error {
  override name = 'SpectrumFitError';
}
