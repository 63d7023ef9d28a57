/**
 * The band check's frequency test: per subject, the centre frequency (Hz) of the highest fitted
 * peak in the band (the stored peaks table, as the peak-center measure of compare), averaged
 * over the channels that have such a peak; and its width (full width at half maximum, Hz) the
 * same way. Subjects with no fitted peak in the band on any channel have no centre: they are
 * left out of these two tests only, and counted per group.
 *
 * Why the fitted peak and not a power-weighted centroid of the residual over the band: a
 * centroid always exists, but it is pulled toward the band's centre by the band edges (a peak
 * near an edge is cut off on one side) and by the residual's baseline (the aperiodic misfit and
 * neighbouring rhythms), and it moves when the peak's height changes while its centre does not —
 * a pure power change would read as a frequency shift. The fitted centre is the Gaussian's own
 * parameter, fitted jointly with the aperiodic part (Donoghue et al. 2020); its cost is that a
 * subject without a detected peak has no value, which is why the count of those is reported.
 */
import type { Contrast } from '../contrast/spec.ts';
import type { ContrastData, Exclusion } from '../contrast/data.ts';
import type { Band } from '../spectrum/bands.ts';
import { assembleAveraged, reduce, type ScalarValues } from './scalar-test.ts';

/** Subjects needed to run the test: 2 per group and 3 in all (as a whole contrast). */
const MIN_PER_GROUP = 2;
const MIN_IN_ALL = 3;

export interface PeakGroupMean {
  /** group name, condition name, or "all subjects" */
  name: string;
  /** subjects in the mean; null in a blinded exploration (group sizes pooled) */
  n: number | null;
  /** mean centre of the highest fitted peak in the band, Hz */
  centerHz: number;
  /** mean full width at half maximum of that peak, Hz */
  widthHz: number;
}

export interface PeakCenterSummary {
  /** subjects (pairs) per group in the centre and width tests: a fitted peak in the band on at least one channel */
  withPeak: Record<string, number>;
  /** subjects (pairs) per group left out of those tests: no fitted peak in the band on any channel (a pair: in either condition) */
  withoutPeak: Record<string, number>;
  /** mean centre and width per group or condition, over the subjects in the tests */
  means: PeakGroupMean[];
  /** why the tests did not run (too few subjects with a peak), or null */
  skipped: string | null;
  /** how the tests treat subjects without a peak, in words */
  note: string;
}

export interface PeakValues {
  /** centre per subject (null when the test cannot run) */
  center: ScalarValues | null;
  width: ScalarValues | null;
  summary: PeakCenterSummary;
}

const groupKey = (v: ScalarValues, i: number): string =>
  v.design.kind === 'groups' ? (v.subjects[i].group ?? 'all') : v.design.kind === 'paired' ? 'pairs' : 'subjects';

/** The values of the subjects at the given indices (same design rows). */
function keepOnly(v: ScalarValues, idx: number[], leftOut: Exclusion[]): ScalarValues {
  return {
    measure: v.measure,
    subjects: idx.map((i) => v.subjects[i]),
    excluded: [...v.excluded, ...leftOut],
    values: Float64Array.from(idx, (i) => v.values[i]),
    second: v.second ? Float64Array.from(idx, (i) => v.second![i]) : null,
    design: v.design,
    rows: idx.map((i) => v.rows[i]),
  };
}

function mean(values: Float64Array, idx: number[]): number {
  let s = 0;
  for (const i of idx) s += values[i];
  return s / idx.length;
}

/** Centre and width values of the band's highest fitted peak per subject, and who has none. */
export function peakValues(c: Contrast, data: ContrastData, band: Band, channelsText: string): PeakValues {
  const bandText = `${band.name} ${band.loHz}–${band.hiHz} Hz`;
  const first = (r: Float64Array) => r[0];
  const center = reduce(
    `centre frequency (Hz) of the highest fitted peak in ${bandText}, mean over the channels with one`,
    assembleAveraged(c, data, { measure: 'peak-center', bands: [band] }),
    first,
  );
  const width = reduce(
    `full width at half maximum (Hz) of the highest fitted peak in ${bandText}, mean over the channels with one`,
    assembleAveraged(c, data, { measure: 'peak-width', bands: [band] }),
    first,
  );
  const has = (i: number) => !Number.isNaN(center.values[i]) && (center.second === null || !Number.isNaN(center.second[i]));
  const keys = center.design.kind === 'groups' ? (center.design.groupNames ?? []) : [center.design.kind === 'paired' ? 'pairs' : 'subjects'];
  const withPeak: Record<string, number> = Object.fromEntries(keys.map((k) => [k, 0]));
  const withoutPeak: Record<string, number> = Object.fromEntries(keys.map((k) => [k, 0]));
  const kept: number[] = [];
  const leftOut: Exclusion[] = [];
  const reason = `no fitted peak in ${bandText} on any of ${channelsText}${center.second ? ' in one of the conditions' : ''}: left out of the peak-centre and width tests only`;
  center.subjects.forEach((s, i) => {
    const g = groupKey(center, i);
    if (has(i)) {
      kept.push(i);
      withPeak[g] = (withPeak[g] ?? 0) + 1;
    } else {
      leftOut.push({ subject: s.subject, channel: null, reason });
      withoutPeak[g] = (withoutPeak[g] ?? 0) + 1;
    }
  });
  const counts = Object.values(withPeak);
  const tooFew = kept.length < MIN_IN_ALL || (center.design.kind === 'groups' && counts.some((k) => k < MIN_PER_GROUP));
  const skipped = tooFew
    ? `too few subjects with a fitted peak in ${bandText} (${Object.entries(withPeak)
        .map(([g, k]) => `${g} ${k}`)
        .join(', ')}; the test needs ${center.design.kind === 'groups' ? `${MIN_PER_GROUP} per group and ` : ''}${MIN_IN_ALL} in all)`
    : null;
  const means: PeakGroupMean[] = [];
  if (center.design.kind === 'groups') {
    for (const g of keys) {
      const idx = kept.filter((i) => center.subjects[i].group === g);
      if (idx.length > 0) means.push({ name: g, n: idx.length, centerHz: mean(center.values, idx), widthHz: mean(width.values, idx) });
    }
  } else if (center.second && center.design.kind === 'paired' && kept.length > 0) {
    const [a, b] = center.design.conditionNames ?? ['first', 'second'];
    means.push({ name: a, n: kept.length, centerHz: mean(center.values, kept), widthHz: mean(width.values, kept) });
    means.push({ name: b, n: kept.length, centerHz: mean(center.second, kept), widthHz: mean(width.second!, kept) });
  } else if (kept.length > 0) means.push({ name: 'all subjects', n: kept.length, centerHz: mean(center.values, kept), widthHz: mean(width.values, kept) });
  const total = Object.values(withoutPeak).reduce((a, b) => a + b, 0);
  const note =
    total === 0
      ? `Every subject has a fitted peak in ${bandText} on at least one of the channels.`
      : `Subjects without a fitted peak in ${bandText} on any of the channels (${Object.entries(withoutPeak)
          .map(([g, k]) => `${g} ${k}`)
          .join(', ')}) are left out of the peak-centre and width tests (they have no centre) and stay in every other test.`;
  const summary: PeakCenterSummary = { withPeak, withoutPeak, means, skipped, note };
  if (tooFew) return { center: null, width: null, summary };
  return { center: keepOnly(center, kept, leftOut), width: keepOnly(width, kept, leftOut), summary };
}
