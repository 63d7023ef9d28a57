// The two kernels Welch's and the multitaper estimator share: the power of two real segments from
// one complex FFT of z = a + i·b, and the one-sided density of the summed power.

/** raw[k] += |A_k|² + |B_k|² = (|Z_k|² + |Z_{n−k}|²)/2, with Z_n = Z_0 (two-for-one real FFT; y interleaved re, im of Z). */
export function addPairPower(y: ArrayLike<number>, n: number, nBins: number, raw: Float64Array): void {
  raw[0] += y[0] * y[0] + y[1] * y[1];
  for (let k = 1; k < nBins; k++) {
    const m = n - k;
    raw[k] += 0.5 * (y[2 * k] * y[2 * k] + y[2 * k + 1] * y[2 * k + 1] + y[2 * m] * y[2 * m] + y[2 * m + 1] * y[2 * m + 1]);
  }
}

/** sum[k] += raw[k]·scale, doubled for every bin but DC and (n even) Nyquist: the one-sided density (scipy.signal.welch, return_onesided). */
export function addOneSided(raw: Float64Array, scale: number, n: number, nBins: number, sum: Float64Array): void {
  const evenNyquist = n % 2 === 0 ? n / 2 : -1;
  for (let k = 0; k < nBins; k++) {
    const doubled = k !== 0 && k !== evenNyquist;
    sum[k] += raw[k] * scale * (doubled ? 2 : 1);
  }
}
