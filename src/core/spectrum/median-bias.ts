/**
 * Bias of the median of n periodogram values (exponentially distributed) relative to their mean:
 *   bias(n) = 1 + Σ_{i=1}^{⌊(n−1)/2⌋} (1/(2i+1) − 1/(2i))
 * (Allen et al. 2012, Phys. Rev. D 85:122006, appendix B; as in scipy.signal.welch's
 * average='median'). bias(1) = bias(2) = 1; it tends to ln 2.
 */
export function medianBias(n: number): number {
  if (!(n >= 1) || !Number.isInteger(n)) throw new Error(`invalid count for median bias: ${n}`);
  let b = 1;
  const m = Math.floor((n - 1) / 2);
  for (let i = 1; i <= m; i++) b += 1 / (2 * i + 1) - 1 / (2 * i);
  return b;
}
