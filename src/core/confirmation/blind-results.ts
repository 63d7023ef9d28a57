/**
 * Results of a blinded exploration with the group sizes pooled. While the groups are coded, a
 * count per coded group would tell which group is which to anyone who knows the real group sizes
 * (or which subjects were left out), so every count per group is replaced by the count over both
 * groups, every subject loses its group, and per-group sizes of summaries are dropped. The
 * statistics themselves (t, df, p, effect sizes and their intervals) are symmetric in the groups'
 * sizes and stay.
 */
import type { CompareResult } from '../contrast/run.ts';
import type { BandCheckResult } from '../verdict/band-check.ts';
import type { PathResult, SpecificationCurve } from '../verdict/paths.ts';
import type { ScalarTest } from '../verdict/scalar-test.ts';

/** The key of a pooled count. */
export const POOLED = 'both groups';

const countsText = (n: Readonly<Record<string, number>>) =>
  Object.entries(n)
    .map(([g, k]) => `${g} ${k}`)
    .join(', ');
const sum = (n: Readonly<Record<string, number>>) => Object.values(n).reduce((a, b) => a + b, 0);

/** One count over the groups. */
export function pooled(n: Readonly<Record<string, number>>): Record<string, number> {
  return { [POOLED]: sum(n) };
}

/** A text with each listed count per group ("group A 3, group B 5") replaced by its pooled count. */
function poolText(text: string, counts: readonly Readonly<Record<string, number>>[]): string {
  let out = text;
  for (const n of counts) if (Object.keys(n).length > 1) out = out.replaceAll(countsText(n), countsText(pooled(n)));
  return out;
}

export function blindCompareResult(r: CompareResult): CompareResult {
  const s = r.statistics;
  const perPoint = (r.valuesPerPoint ?? []).map((p) => p.n);
  const m = s.missing;
  // values per point: one row over both groups
  const missing = m && m.nPerPoint.length > 1 ? { ...m, nPerPoint: [m.nPerPoint[0].map((_, p) => m.nPerPoint.reduce((a, row) => a + row[p], 0))] } : m;
  return {
    ...r,
    n: pooled(r.n),
    subjects: r.subjects.map((x) => ({ ...x, group: null })),
    statistics: { ...s, nPerGroup: null, ...(missing ? { missing } : {}) },
    valuesPerPoint: r.valuesPerPoint && r.valuesPerPoint.map((p) => ({ ...p, n: pooled(p.n) })),
    notes: r.notes.map((t) => poolText(t, perPoint)),
  };
}

const blindTest = <T extends ScalarTest | null>(t: T): T => (t === null ? t : { ...t, n: pooled(t.n) });

export function blindBandCheckResult(r: BandCheckResult): BandCheckResult {
  const weights = r.tests.peakHeight.n;
  const presence =
    Object.keys(r.peakPresence).length > 1
      ? { [POOLED]: Object.entries(r.peakPresence).reduce((a, [g, share]) => a + share * (weights[g] ?? 0), 0) / Math.max(1, sum(weights)) }
      : r.peakPresence;
  const pc = r.peakCenter;
  const tests = Object.fromEntries(Object.entries(r.tests).map(([k, t]) => [k, blindTest(t)])) as unknown as BandCheckResult['tests'];
  return {
    ...r,
    n: pooled(r.n),
    tests,
    peakPresence: presence,
    peakCenter: {
      ...pc,
      withPeak: pooled(pc.withPeak),
      withoutPeak: pooled(pc.withoutPeak),
      means: pc.means.map((m) => ({ ...m, n: null })),
      skipped: pc.skipped && poolText(pc.skipped, [pc.withPeak]),
      note: poolText(pc.note, [pc.withoutPeak]),
    },
    figure: { ...r.figure, series: r.figure.series.map((s) => ({ ...s, n: null })), peakCenters: r.figure.peakCenters.map((m) => ({ ...m, n: null })) },
  };
}

function blindPath(p: PathResult): PathResult {
  const f = p.frequency;
  return {
    ...p,
    n: pooled(p.n),
    ...(f ? { frequency: { ...f, n: pooled(f.n), withoutPeak: pooled(f.withoutPeak), skipped: f.skipped && poolText(f.skipped, [f.n]) } } : {}),
  };
}

export function blindCurve(c: SpecificationCurve): SpecificationCurve {
  return { ...c, paths: c.paths.map(blindPath) };
}
