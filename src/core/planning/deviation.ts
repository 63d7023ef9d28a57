/**
 * `bandwise deviation`: every subject scored against the reference group at every channel ×
 * point, as a z that says how unusual the subject's value is for a reference subject with the
 * same covariates.
 *
 * Not robust: the reference distribution is summarised by its mean (or, with covariates, the
 * least-squares fit) and its standard deviation, so a wild reference recording widens every
 * score; exclude bad recordings in the quality screen first. Per point, with X the reference
 * group's design (intercept, covariates; covariates.ts), m reference subjects and p columns:
 *   another subject:   z = (y − x₀ᵀβ̂) / (s·√(1 + x₀ᵀ(XᵀX)⁻¹x₀)),  s² = SSE/(m − p)
 *   a reference subject, leave-one-out (never compared with itself): the same z with the fit,
 *     s and (XᵀX)⁻¹ of the other m − 1 subjects, which equals the externally studentised residual
 *     z = e_i / (s₍ᵢ₎·√(1 − h_i)),  s₍ᵢ₎² = (SSE − e_i²/(1 − h_i))/(m − p − 1),  h_i = x_iᵀ(XᵀX)⁻¹x_i
 *     (Belsley, Kuh & Welsch 1980, Regression Diagnostics, §2.1; from memory).
 * Without covariates (p = 1) this is Crawford & Howell's (1998, The Clinical Neuropsychologist
 * 12:482–486) comparison of one person with a small normative sample, z = (y − ȳ)/(s·√(1 + 1/m));
 * with covariates Crawford & Garthwaite's (2006, Neuropsychology 20:259–271) regression form (both
 * from memory). For a normal reference these z follow Student's t with m − p (reference subjects:
 * m − p − 1) degrees of freedom, so their spread is √(df/(df − 2)), slightly above 1 in small groups.
 *
 * Summaries: per subject the share of finite points with |z| > 2 and the mean z; the share expected
 * for a subject of the reference distribution is the reference subjects' own mean share (their
 * leave-one-out z, no normality assumed), with the normal-theory value 2·F_t(−2; m − p) beside it;
 * per group the distribution of shares (quantiles, Hyndman & Fan type 7) and how many subjects
 * exceed the reference subjects' 95th percentile share — a few extreme subjects show as a high
 * maximum over a typical median, a whole group shifted a little as a raised median and mean z.
 */
import type { ContrastData, Exclusion } from '../contrast/data.ts';
import { RESEARCH_NOTE } from '../contrast/run.ts';
import { tCdf } from '../stats/distributions.ts';
import { covariateDesign, type CovariateDesign, type ParticipantValue } from './covariates.ts';
import { measureContrast, type DeviationSpec } from './deviation-spec.ts';
import { PlanningInputError } from './planting.ts';
import { quantiles } from './quantile.ts';
import { spdInverse } from './spd-inverse.ts';
import { subjectMatrix, type SubjectMatrix } from './subject-matrix.ts';

/** |z| beyond which a point counts as deviant in the summaries. */
export const DEVIANT_Z = 2;

export interface DeviationModel {
  /** the subjects scored (rows), their measure and group */
  matrix: SubjectMatrix;
  isReference: Uint8Array;
  design: CovariateDesign;
  /** (XᵀX)⁻¹ of the reference group, p × p */
  xtxInverse: Float64Array;
  /** fitted coefficients, p × points */
  beta: Float64Array;
  /** subjects × points */
  z: Float64Array;
  nReference: number;
}

export interface SubjectDeviation {
  subject: string;
  group: string | null;
  /** scored leave-one-out as a member of the reference group */
  reference: boolean;
  /** share of finite points with |z| > 2 */
  share: number;
  meanZ: number;
  /** [channel][point]; null where no z exists (no reference spread there) */
  z: (number | null)[][];
}

export interface ShareSummary {
  group: string | null;
  n: number;
  shares: { min: number; q25: number; median: number; q75: number; max: number };
  meanShare: number;
  /** subjects whose share exceeds the reference subjects' 95th percentile share */
  beyondReference95: number;
  /** mean over the group's subjects of their mean z (a shift of the whole group) */
  meanZ: number;
}

export interface DeviationResult {
  kind: 'deviation';
  note: string;
  settings: DeviationSpec;
  measure: string;
  channels: string[];
  freqsHz: number[];
  reference: { groupColumn: string; group: string; n: number; subjects: string[] };
  covariates: { name: string; kind: 'numeric' | 'categorical'; baseline: string | null; levels: string[] }[];
  modelColumns: string[];
  method: { z: string; reference: string; expected: string; degreesOfFreedom: { other: number; reference: number } };
  /** share of points beyond |z| > 2 expected for a subject of the reference distribution (the reference subjects' mean) */
  expectedShare: number;
  /** the same under a normal reference distribution: 2·F_t(−2; m − p) */
  expectedShareNormal: number;
  /** the reference subjects' 95th percentile share */
  referenceShare95: number;
  subjects: SubjectDeviation[];
  groups: ShareSummary[];
  excluded: Exclusion[];
}

/** Reads the participants' covariate values, one per scored subject. */
function covariateValues(names: readonly string[], data: ContrastData, subjects: readonly string[]): Record<string, ParticipantValue[]> {
  const byId = new Map(data.participants.map((p) => [String(p.subject), p]));
  const out: Record<string, ParticipantValue[]> = {};
  for (const name of names) {
    if (!data.participants.some((p) => name in p)) throw new PlanningInputError(`the participants table has no column ${name}`);
    out[name] = subjects.map((s) => {
      const v = byId.get(s)?.[name];
      return v === undefined || v === null || (typeof v === 'number' && !Number.isFinite(v)) ? null : v;
    });
  }
  return out;
}

/** Fits the reference group at every point and scores every subject (see the module comment). */
export function fitDeviation(spec: DeviationSpec, data: ContrastData): DeviationModel & { excluded: Exclusion[] } {
  const all = subjectMatrix(measureContrast(spec), data);
  const values = covariateValues(
    spec.covariates,
    data,
    all.subjects.map((s) => s.subject),
  );
  const designAll = covariateDesign(
    spec.covariates,
    values,
    all.subjects.map((s) => s.group === spec.referenceGroup),
  );
  const excluded = [...all.excluded];
  // subjects that cannot be predicted (a missing covariate, an unknown level) are not scored
  const keep = all.subjects.map((_, s) => s).filter((s) => !designAll.unusable.has(s));
  for (const [s, why] of designAll.unusable) excluded.push({ subject: all.subjects[s].subject, channel: null, reason: `not scored: ${why}` });
  const W = all.channels.length * all.freqsHz.length;
  const p = designAll.nColumns;
  const matrix: SubjectMatrix = { ...all, subjects: keep.map((s) => all.subjects[s]), data: new Float64Array(keep.length * W) };
  const x = new Float64Array(keep.length * p);
  keep.forEach((s, i) => {
    matrix.data.set(all.data.subarray(s * W, (s + 1) * W), i * W);
    x.set(designAll.x.subarray(s * p, (s + 1) * p), i * p);
  });
  const design = { ...designAll, x, unusable: new Map<number, string>() };
  const S = keep.length;
  const isReference = Uint8Array.from(matrix.subjects, (s) => (s.group === spec.referenceGroup ? 1 : 0));
  const refs = [...isReference.keys()].filter((i) => isReference[i] === 1);
  const m = refs.length;
  if (m - p - 1 < 2) {
    throw new PlanningInputError(
      `the reference group ${spec.groupColumn} = ${spec.referenceGroup} has ${m} subject${m === 1 ? '' : 's'} with data; scoring with ${p} model term${p === 1 ? '' : 's'} (intercept${p > 1 ? ' and covariates' : ''}) needs at least ${p + 3}`,
    );
  }

  // normal equations of the reference group: A = XᵀX, β = A⁻¹XᵀY
  const a = new Float64Array(p * p);
  const xty = new Float64Array(p * W);
  for (const r of refs) {
    const xr = x.subarray(r * p, (r + 1) * p);
    const yr = matrix.data.subarray(r * W, (r + 1) * W);
    for (let i = 0; i < p; i++) {
      for (let j = 0; j < p; j++) a[i * p + j] += xr[i] * xr[j];
      const row = xty.subarray(i * W, (i + 1) * W);
      for (let q = 0; q < W; q++) row[q] += xr[i] * yr[q];
    }
  }
  const xtxInverse = spdInverse(a, p);
  if (!xtxInverse)
    throw new PlanningInputError(`the covariates ${spec.covariates.join(', ')} are constant or collinear in the reference group: they cannot be regressed out`);
  const beta = new Float64Array(p * W);
  for (let i = 0; i < p; i++)
    for (let j = 0; j < p; j++) {
      const c = xtxInverse[i * p + j];
      for (let q = 0; q < W; q++) beta[i * W + q] += c * xty[j * W + q];
    }

  // residuals e = y − xᵀβ of every subject; SSE over the reference group
  const e = new Float64Array(S * W);
  for (let s = 0; s < S; s++) {
    const xs = x.subarray(s * p, (s + 1) * p);
    for (let q = 0; q < W; q++) {
      let fit = 0;
      for (let i = 0; i < p; i++) fit += xs[i] * beta[i * W + q];
      e[s * W + q] = matrix.data[s * W + q] - fit;
    }
  }
  const sse = new Float64Array(W);
  for (const r of refs) for (let q = 0; q < W; q++) sse[q] += e[r * W + q] * e[r * W + q];

  const z = new Float64Array(S * W);
  for (let s = 0; s < S; s++) {
    const xs = x.subarray(s * p, (s + 1) * p);
    // leverage x_sᵀ(XᵀX)⁻¹x_s
    let h = 0;
    for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) h += xs[i] * xtxInverse[i * p + j] * xs[j];
    for (let q = 0; q < W; q++) {
      const es = e[s * W + q];
      let value: number;
      if (isReference[s] === 1) {
        // externally studentised residual: e/(s₍ᵢ₎√(1 − h)), s₍ᵢ₎² = (SSE − e²/(1 − h))/(m − p − 1)
        const rest = 1 - h;
        const s2 = rest > 1e-10 ? (sse[q] - (es * es) / rest) / (m - p - 1) : NaN;
        value = s2 > 0 ? es / Math.sqrt(s2 * rest) : NaN;
      } else {
        // prediction z: e/(s√(1 + h)), s² = SSE/(m − p)
        const s2 = sse[q] / (m - p);
        value = s2 > 0 ? es / Math.sqrt(s2 * (1 + h)) : NaN;
      }
      z[s * W + q] = value;
    }
  }
  return { matrix, isReference, design, xtxInverse, beta, z, nReference: m, excluded };
}

/** Share of finite z beyond |z| > 2 and the mean z of row s. */
function rowSummary(z: Float64Array, s: number, W: number): { share: number; meanZ: number } {
  let n = 0;
  let beyond = 0;
  let sum = 0;
  for (let q = 0; q < W; q++) {
    const v = z[s * W + q];
    if (!Number.isFinite(v)) continue;
    n++;
    sum += v;
    if (Math.abs(v) > DEVIANT_Z) beyond++;
  }
  return { share: n > 0 ? beyond / n : NaN, meanZ: n > 0 ? sum / n : NaN };
}

/** The JSON-able result of a fitted model (subjects, their z maps, the summaries). */
export function deviationResult(spec: DeviationSpec, model: DeviationModel & { excluded: Exclusion[] }): DeviationResult {
  const { matrix, z, isReference, design } = model;
  const C = matrix.channels.length;
  const F = matrix.freqsHz.length;
  const W = C * F;
  const m = model.nReference;
  const p = design.nColumns;
  const subjects: SubjectDeviation[] = matrix.subjects.map((sub, s) => {
    const { share, meanZ } = rowSummary(z, s, W);
    const map = Array.from({ length: C }, (_, c) =>
      Array.from({ length: F }, (_, f) => {
        const v = z[s * W + c * F + f];
        return Number.isFinite(v) ? v : null;
      }),
    );
    return { subject: sub.subject, group: sub.group, reference: isReference[s] === 1, share, meanZ, z: map };
  });
  const refShares = subjects
    .filter((s) => s.reference)
    .map((s) => s.share)
    .filter(Number.isFinite);
  const expectedShare = refShares.reduce((a, b) => a + b, 0) / refShares.length;
  const [referenceShare95] = quantiles(refShares, [0.95]);
  const groupNames = [...new Set(subjects.map((s) => s.group))].sort((a, b) => (a === null ? 1 : b === null ? -1 : a.localeCompare(b)));
  const groups: ShareSummary[] = groupNames.map((g) => {
    const members = subjects.filter((s) => s.group === g);
    const shares = members.map((s) => s.share).filter(Number.isFinite);
    const [min, q25, median, q75, max] = quantiles(shares, [0, 0.25, 0.5, 0.75, 1]);
    const meanZs = members.map((s) => s.meanZ).filter(Number.isFinite);
    return {
      group: g,
      n: members.length,
      shares: { min, q25, median, q75, max },
      meanShare: shares.reduce((a, b) => a + b, 0) / shares.length,
      beyondReference95: shares.filter((x) => x > referenceShare95).length,
      meanZ: meanZs.reduce((a, b) => a + b, 0) / meanZs.length,
    };
  });
  const covariateText =
    spec.covariates.length === 0
      ? 'the reference mean and standard deviation'
      : `a least-squares fit on ${design.columnNames.slice(1).join(', ')} (numeric covariates centred, text covariates as indicator columns)`;
  return {
    kind: 'deviation',
    note: `${RESEARCH_NOTE} A deviation from a reference group is a statistical description for research; an individual deviation is not a clinical finding.`,
    settings: spec,
    measure: matrix.layout.description,
    channels: matrix.channels,
    freqsHz: matrix.freqsHz,
    reference: {
      groupColumn: spec.groupColumn,
      group: spec.referenceGroup,
      n: m,
      subjects: matrix.subjects.filter((_, s) => isReference[s] === 1).map((s) => s.subject),
    },
    covariates: design.covariates,
    modelColumns: design.columnNames,
    method: {
      z: `per channel × point, z = (value − prediction)/(s·√(1 + leverage)) with the prediction and s from ${covariateText} of the ${m} reference subjects (not robust; Crawford & Howell 1998, Crawford & Garthwaite 2006)`,
      reference: 'reference subjects are scored leave-one-out, against the other reference subjects only (the externally studentised residual)',
      expected: `expected share beyond |z| > ${DEVIANT_Z}: the reference subjects' mean share of their own leave-one-out z (no normality assumed); normal-theory value 2·F_t(−${DEVIANT_Z}; ${m - p})`,
      degreesOfFreedom: { other: m - p, reference: m - p - 1 },
    },
    expectedShare,
    expectedShareNormal: 2 * tCdf(-DEVIANT_Z, m - p),
    referenceShare95,
    subjects,
    groups,
    excluded: model.excluded,
  };
}

/** Scores every subject of the data (fitDeviation, then deviationResult). */
export function deviation(spec: DeviationSpec, data: ContrastData): DeviationResult {
  return deviationResult(spec, fitDeviation(spec, data));
}

export interface ReferenceBand {
  /** the subject's measure, [channel·F + point] */
  values: Float64Array;
  /** 5 %, 50 % and 95 % quantiles of the other reference subjects, moved to the subject's covariates */
  low: Float64Array;
  median: Float64Array;
  high: Float64Array;
}

/**
 * What the subject's values are compared with: the other reference subjects' values at each point,
 * each moved to the subject's covariates (reference residual + the subject's prediction; without
 * covariates simply their values), summarised by the 5 %, 50 % and 95 % quantiles.
 */
export function referenceBand(model: DeviationModel, subjectIndex: number): ReferenceBand {
  const { matrix, design, beta, isReference } = model;
  const W = matrix.channels.length * matrix.freqsHz.length;
  const p = design.nColumns;
  if (!(subjectIndex >= 0 && subjectIndex < matrix.subjects.length)) throw new RangeError(`no scored subject ${subjectIndex}`);
  const others = [...isReference.keys()].filter((r) => isReference[r] === 1 && r !== subjectIndex);
  const predict = (s: number, q: number) => {
    let v = 0;
    for (let i = 0; i < p; i++) v += design.x[s * p + i] * beta[i * W + q];
    return v;
  };
  const low = new Float64Array(W);
  const median = new Float64Array(W);
  const high = new Float64Array(W);
  const column = new Float64Array(others.length);
  for (let q = 0; q < W; q++) {
    const own = predict(subjectIndex, q);
    others.forEach((r, i) => (column[i] = matrix.data[r * W + q] - predict(r, q) + own));
    [low[q], median[q], high[q]] = quantiles(column, [0.05, 0.5, 0.95]);
  }
  return { values: matrix.data.slice(subjectIndex * W, (subjectIndex + 1) * W), low, median, high };
}
