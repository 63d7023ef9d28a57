/**
 * Nuisance covariates as model columns: a numeric column as it is; a categorical one (text, e.g.
 * sex) with k levels as k − 1 indicator columns against its first level in sort order (treatment
 * coding, common practice). Refused in one line naming the covariate: a covariate with one value
 * for every subject, and a column that is a linear combination of the intercept and the columns
 * before it, or one that makes the effect of interest such a combination (collinearity).
 */
import { ContrastDataError } from './data-error.ts';

export type NuisanceValue = number | string;

export interface NuisanceColumn {
  /** the covariate's name; an indicator column adds its level: sex=M */
  name: string;
  values: number[];
}

/** Relative norm below which a column counts as dependent on the ones before it (as src/core/stats/linear-model-t.ts). */
const TOLERANCE = 1e-10;

/** The model columns of the nuisance covariates `names`, values per kept subject in the same order. */
export function nuisanceModel(
  names: readonly string[],
  kept: readonly { nuisance: readonly NuisanceValue[] }[],
): { covariate: string; column: NuisanceColumn }[] {
  const out: { covariate: string; column: NuisanceColumn }[] = [];
  names.forEach((name, i) => {
    const values = kept.map((k) => k.nuisance[i]);
    const distinct = [...new Set(values.map(String))].sort();
    if (distinct.length < 2)
      throw new ContrastDataError(
        `nuisance covariate ${name} has the same value (${distinct[0]}) for all ${kept.length} subjects: it cannot be adjusted for; leave it out`,
      );
    if (values.every((v) => typeof v === 'number')) {
      out.push({ covariate: name, column: { name, values: values as number[] } });
      return;
    }
    // categorical: one indicator per level but the first
    for (const level of distinct.slice(1))
      out.push({ covariate: name, column: { name: `${name}=${level}`, values: values.map((v) => (String(v) === level ? 1 : 0)) } });
  });
  return out;
}

/**
 * Refuses collinear columns: the intercept, then each nuisance column, then the effect of interest,
 * orthogonalised in turn by modified Gram–Schmidt (Golub & Van Loan, Matrix Computations, §5.2.8).
 */
export function checkCollinearity(columns: readonly { covariate: string; column: NuisanceColumn }[], effect: readonly number[], effectName: string): void {
  const n = effect.length;
  const basis: Float64Array[] = [];
  const add = (values: readonly number[]): boolean => {
    const v = Float64Array.from(values);
    let norm0 = 0;
    for (let s = 0; s < n; s++) norm0 += v[s] * v[s];
    for (const q of basis) {
      let dot = 0;
      for (let s = 0; s < n; s++) dot += q[s] * v[s];
      for (let s = 0; s < n; s++) v[s] -= dot * q[s];
    }
    let norm = 0;
    for (let s = 0; s < n; s++) norm += v[s] * v[s];
    if (!(Math.sqrt(norm) > TOLERANCE * Math.max(1, Math.sqrt(norm0)))) return false;
    basis.push(v.map((x) => x / Math.sqrt(norm)));
    return true;
  };
  add(new Array<number>(n).fill(1));
  for (const { covariate, column } of columns) {
    if (!add(column.values)) {
      const others = [...new Set(columns.map((c) => c.covariate).filter((c) => c !== covariate))];
      throw new ContrastDataError(
        `nuisance covariate ${covariate} is collinear with ${others.length > 0 ? `the intercept and ${others.join(', ')}` : 'the intercept'} over the ${n} subjects: it cannot be adjusted for; leave it out`,
      );
    }
  }
  if (!add(effect))
    throw new ContrastDataError(
      `${effectName} is collinear with the nuisance covariates (${[...new Set(columns.map((c) => c.covariate))].join(', ')}) over the ${n} subjects: no effect is left to test; leave them out`,
    );
}
