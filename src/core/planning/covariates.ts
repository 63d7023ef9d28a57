/**
 * The covariate columns `bandwise deviation` regresses on the reference group: an intercept, each
 * numeric covariate centred at its reference-group mean, and each text covariate as indicator
 * (0/1) columns, one per level but the first (the levels seen in the reference group, sorted;
 * common practice, "treatment coding"). A covariate is numeric when every value it has is a number.
 * A subject without a value, or with a level the reference group lacks, cannot be predicted:
 * its row is NaN and `unusable` says why.
 */
import { PlanningInputError } from './planting.ts';

export type ParticipantValue = string | number | null;

export interface CovariateDesign {
  /** subjects × columns, row-major; column 0 is the intercept; NaN rows for unusable subjects */
  x: Float64Array;
  nColumns: number;
  /** column names: 'intercept', numeric names, 'name=level' indicators */
  columnNames: string[];
  covariates: { name: string; kind: 'numeric' | 'categorical'; baseline: string | null; levels: string[] }[];
  /** subject index → why it cannot be predicted */
  unusable: Map<number, string>;
}

/**
 * values[name][s]: covariate `name` of subject s (as stored; null when missing); reference[s]:
 * whether subject s is in the reference group. Throws for a covariate the participants table lacks.
 */
export function covariateDesign(names: readonly string[], values: Record<string, ParticipantValue[]>, reference: readonly boolean[]): CovariateDesign {
  const S = reference.length;
  const columns: { name: string; values: Float64Array }[] = [{ name: 'intercept', values: new Float64Array(S).fill(1) }];
  const covariates: CovariateDesign['covariates'] = [];
  const unusable = new Map<number, string>();
  const refuse = (s: number, why: string) => {
    if (!unusable.has(s)) unusable.set(s, why);
  };
  for (const name of names) {
    const v = values[name];
    if (!v) throw new PlanningInputError(`the participants table has no column ${name}`);
    v.forEach((x, s) => x === null && refuse(s, `no value of ${name}`));
    const numeric = v.every((x) => x === null || typeof x === 'number');
    if (numeric) {
      // centred at the reference mean (the fit is the same; the normal equations better conditioned)
      let sum = 0;
      let count = 0;
      v.forEach((x, s) => {
        if (reference[s] && typeof x === 'number') {
          sum += x;
          count++;
        }
      });
      const mean = count > 0 ? sum / count : 0;
      columns.push({ name, values: Float64Array.from(v, (x) => (typeof x === 'number' ? x - mean : NaN)) });
      covariates.push({ name, kind: 'numeric', baseline: null, levels: [] });
      continue;
    }
    const levels = [...new Set(v.filter((x, s) => reference[s] && x !== null).map(String))].sort();
    v.forEach((x, s) => x !== null && !levels.includes(String(x)) && refuse(s, `${name} = ${String(x)} does not occur in the reference group`));
    for (const level of levels.slice(1))
      columns.push({ name: `${name}=${level}`, values: Float64Array.from(v, (x) => (x === null ? NaN : String(x) === level ? 1 : 0)) });
    covariates.push({ name, kind: 'categorical', baseline: levels[0] ?? null, levels });
  }
  const p = columns.length;
  const x = new Float64Array(S * p);
  for (let s = 0; s < S; s++) for (let j = 0; j < p; j++) x[s * p + j] = unusable.has(s) ? NaN : columns[j].values[s];
  return { x, nColumns: p, columnNames: columns.map((c) => c.name), covariates, unusable };
}
