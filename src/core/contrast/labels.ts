/**
 * What a contrast compares and in which direction, in words, for every title, colour bar, table
 * and sentence that shows its result. Differences are groups[1] minus groups[0], paired designs
 * second minus first (docs/design.md); a covariate design shows a correlation as t.
 */
import type { Contrast } from './spec.ts';

/** The difference a positive statistic means: "patient − control", "N3 − N2", "session 2 − session 1"; null for a covariate. */
export function differenceText(c: Contrast): string | null {
  if (c.design === 'groups' && c.groups) return `${c.groups[1]} − ${c.groups[0]}`;
  if (c.design === 'paired' && c.stages) return `${c.stages[1]} − ${c.stages[0]}`;
  if (c.design === 'paired' && c.sessions) return `session ${c.sessions[1]} − session ${c.sessions[0]}`;
  return null;
}

const adjusted = (c: Contrast) => (c.nuisance.length > 0 ? `, adjusted for ${c.nuisance.join(', ')}` : '');

/** The data and the design in a title: "N2, patient − control", "N3 − N2, paired", "N2, correlation with age". */
export function designTitle(c: Contrast): string {
  if (c.design === 'paired' && c.stages) return `${differenceText(c)}, paired`;
  if (c.design === 'paired') return `${c.stage}, ${differenceText(c)}, paired`;
  if (c.design === 'covariate') return `${c.stage}, correlation with ${c.covariate}${adjusted(c)}`;
  return `${c.stage}, ${differenceText(c)}${adjusted(c)}`;
}

/**
 * The point statistic with its direction, for a colour bar or a column head: "Welch t,
 * patient − control", "paired t, N3 − N2", "correlation with age, shown as t (from Pearson r)".
 * `statistic` is the one the engine used (the contrast may leave it to the design's default).
 */
export function statisticLabel(c: Contrast, statistic: string): string {
  if (c.design === 'covariate') {
    const r = statistic === 'spearman' ? 'rank correlation' : statistic === 'linear-model-t' ? 'partial correlation' : 'correlation';
    const from = statistic === 'spearman' ? 'Spearman ρ' : statistic === 'linear-model-t' ? 'a linear model' : 'Pearson r';
    return `${r} with ${c.covariate}${adjusted(c)}, shown as t (from ${from})`;
  }
  const name =
    statistic === 'welch-t'
      ? 'Welch t'
      : statistic === 'student-t'
        ? 'Student t'
        : statistic === 'paired-t'
          ? 'paired t'
          : statistic === 'linear-model-t'
            ? 't (linear model)'
            : statistic;
  return `${name}, ${differenceText(c)}${adjusted(c)}`;
}

/** What a cluster's sign means: "patient > control", "N3 > N2", "rises with age". */
export function signText(c: Contrast, sign: number): string {
  if (c.design === 'covariate') return `${sign > 0 ? 'rises' : 'falls'} with ${c.covariate}`;
  const [first, second] = c.design === 'groups' ? c.groups! : c.stages ? c.stages : c.sessions!.map((s) => `session ${s}`);
  return sign > 0 ? `${second} > ${first}` : `${second} < ${first}`;
}
