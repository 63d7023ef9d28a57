// The outside reference for a stored stage spectrum: the mean over the given 30-s epochs of
// scipy.signal.welch per epoch (Hann, 4-s segments, 50 % overlap, constant detrend, density
// scaling), 0–45 Hz at 0.25 Hz (181 bins), from the machine's python3.
import { runPython } from './python.ts';

export function scipyStageMean(x: Float64Array, fs: number, epochs: number[]): number[] {
  return runPython<number[]>(
    `from scipy.signal import welch
x = numpy.fromfile(inputs['x'])
epochs = ${JSON.stringify(epochs)}
n = 30 * ${fs}
ps = [welch(x[e*n:(e+1)*n], fs=${fs}, window='hann', nperseg=4*${fs}, noverlap=2*${fs}, detrend='constant', scaling='density')[1] for e in epochs]
print(json.dumps(numpy.mean(ps, axis=0)[:181].tolist()))`,
    { x },
  );
}

/** Largest relative difference of a from b over the bins above 0 Hz. */
export function maxRel(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0;
  for (let k = 1; k < b.length; k++) m = Math.max(m, Math.abs(a[k] - b[k]) / Math.abs(b[k]));
  return m;
}
