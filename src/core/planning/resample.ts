/**
 * One simulated study of `bandwise power`: two groups of n subjects each drawn with replacement
 * from the reference group's rows (the nonparametric bootstrap, Efron 1979, Annals of Statistics
 * 7:1–26), so each simulated subject keeps a real subject's whole channel × frequency profile —
 * the between-subject spread and its covariance across channels and frequencies — and the
 * second group's rows move by the planted shift (planting.ts). Nuisance covariates travel with
 * their subject's row.
 */
import type { Matrix } from '../stats/index.ts';
import type { Random } from '../stats/random.ts';

export interface ReferenceRows {
  /** reference subjects × points, row-major (the contrast's layout) */
  data: Matrix;
  nSubjects: number;
  nPoints: number;
  /** nuisance covariate columns of the contrast, one value per reference subject */
  nuisance: { name: string; values: ArrayLike<number> }[];
}

export interface SimulatedStudy {
  /** 2n × points: rows 0 … n − 1 group 0, rows n … 2n − 1 group 1 (shifted) */
  data: Float64Array;
  group: Uint8Array;
  /** the reference row each simulated subject was drawn from */
  drawn: Int32Array;
  nuisance: { name: string; values: Float64Array }[];
}

/** Draws 2n reference rows with replacement (uniform, rng.int) and adds shift[p] to every point of the second n. */
export function drawStudy(ref: ReferenceRows, n: number, shift: Float64Array, rng: Random): SimulatedStudy {
  if (!(Number.isInteger(n) && n >= 2)) throw new RangeError(`subjects per group must be a whole number ≥ 2, got ${n}`);
  if (ref.nSubjects < 2) throw new RangeError(`the reference group needs at least 2 subjects, has ${ref.nSubjects}`);
  const P = ref.nPoints;
  if (shift.length !== P) throw new RangeError(`shift has ${shift.length} points, the reference rows ${P}`);
  const data = new Float64Array(2 * n * P);
  const group = new Uint8Array(2 * n);
  const drawn = new Int32Array(2 * n);
  for (let s = 0; s < 2 * n; s++) {
    const r = rng.int(ref.nSubjects);
    drawn[s] = r;
    const second = s >= n;
    group[s] = second ? 1 : 0;
    const from = r * P;
    const to = s * P;
    // y_s = x_r (+ shift in the second group)
    if (second) for (let p = 0; p < P; p++) data[to + p] = ref.data[from + p] + shift[p];
    else for (let p = 0; p < P; p++) data[to + p] = ref.data[from + p];
  }
  const nuisance = ref.nuisance.map((c) => ({ name: c.name, values: Float64Array.from(drawn, (r) => c.values[r]) }));
  return { data, group, drawn, nuisance };
}
