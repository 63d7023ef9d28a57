/**
 * Turns a contrast and the rows it reads into the statistics engine's input: which subjects take
 * part (and which are left out, with the reason), the measure per subject × channel × point, and
 * the design. Pure; shared by the command line and the dashboard's worker.
 */
import type { Contrast } from './spec.ts';
import type { AperiodicRow, ContrastData, Exclusion, PeakRow, SpectrumRow } from './data.ts';
import { measureLayout, measureValues, type MeasureLayout } from './measure.ts';
import { mixedRecordedReferences } from './recorded-references.ts';
import { ContrastDataError } from './errors.ts';
import { checkColumns, checkEnoughSubjects, checkNuisanceVaries } from './participant-checks.ts';
import type { PermutationTestInput, Design } from '../stats/index.ts';
import type { Stage } from '../stages.ts';

export interface Participation {
  subject: string;
  /** group name (groups design), condition pair (paired) or null */
  group: string | null;
}

export interface AssembledContrast {
  input: PermutationTestInput;
  layout: MeasureLayout;
  /** subjects in the analysis, in the row order of input.data */
  subjects: Participation[];
  /** left out, with reasons (from the quality screen's list, flags, missing data) */
  excluded: Exclusion[];
  /** group names and sizes (groups design) */
  nPerGroup: Record<string, number>;
  /** the channel names the points use (a channel average is one pseudo-channel) */
  channels: string[];
}

export { ContrastDataError };

function key(subject: string, session: string | null, channel: string, stage: Stage): string {
  return `${subject}\u0000${session ?? ''}\u0000${channel}\u0000${stage}`;
}

/** The (stage, session) of each of the design's conditions: one for groups/covariate, two for paired. */
function conditions(c: Contrast): { stage: Stage; session: string | null; name: string }[] {
  if (c.design === 'paired' && c.stages) return c.stages.map((s) => ({ stage: s, session: c.session ?? null, name: s }));
  if (c.design === 'paired' && c.sessions) return c.sessions.map((s) => ({ stage: c.stage, session: s, name: `session ${s}` }));
  return [{ stage: c.stage, session: c.session ?? null, name: c.stage }];
}

export function assembleContrast(c: Contrast, data: ContrastData): AssembledContrast {
  const axis = data.spectra;
  const layout = measureLayout(c, axis);
  const conds = conditions(c);
  const excluded: Exclusion[] = [];

  const spectra = new Map<string, SpectrumRow>();
  const sessionsOf = new Map<string, Set<string | null>>();
  for (const r of data.spectra.rows) {
    spectra.set(key(r.subject, r.session, r.channel, r.stage), r);
    if (!sessionsOf.has(r.subject)) sessionsOf.set(r.subject, new Set());
    sessionsOf.get(r.subject)!.add(r.session);
  }
  const aperiodic = new Map<string, AperiodicRow>();
  for (const a of data.aperiodic) aperiodic.set(key(a.subject, a.session, a.channel, a.stage), a);
  const peaks = new Map<string, PeakRow[]>();
  for (const p of data.peaks) {
    const k = key(p.subject, p.session, p.channel, p.stage);
    if (!peaks.has(k)) peaks.set(k, []);
    peaks.get(k)!.push(p);
  }

  // channels: those asked for, or every channel stored for this stage
  const stored = [...new Set(data.spectra.rows.filter((r) => conds.some((d) => d.stage === r.stage)).map((r) => r.channel))];
  const channels = c.channels === 'all' ? stored : c.channels;
  for (const ch of channels) if (!stored.includes(ch)) throw new ContrastDataError(`channel ${ch} has no stored ${conds.map((d) => d.stage).join('/')} spectra for reference ${c.reference}`);
  if (channels.length === 0) throw new ContrastDataError(`no stored spectra for stage ${c.stage}, reference ${c.reference}, averaging ${c.averaging}`);

  // the columns the design names exist, with values of the right kind
  checkColumns(c, data.participants);

  // who takes part, by design
  const participants = new Map(data.participants.map((p) => [String(p.subject), p]));
  const userExcluded = new Map<string, Exclusion[]>();
  for (const e of data.exclusions) {
    if (!userExcluded.has(e.subject)) userExcluded.set(e.subject, []);
    userExcluded.get(e.subject)!.push(e);
  }
  const candidates: { subject: string; group: string | null; covariate: number | null; nuisance: number[] }[] = [];
  for (const subject of [...sessionsOf.keys()].sort()) {
    const p = participants.get(subject);
    let group: string | null = null;
    let covariate: number | null = null;
    if (c.design === 'groups') {
      const g = p?.[c.groupColumn];
      if (g === null || g === undefined || !c.groups!.includes(String(g))) continue; // not in either group: not part of this contrast
      group = String(g);
    }
    if (c.design === 'covariate') {
      const v = p?.[c.covariate!];
      if (typeof v !== 'number' || !Number.isFinite(v)) {
        excluded.push({ subject, channel: null, reason: `no numeric value of ${c.covariate}` });
        continue;
      }
      covariate = v;
    }
    const nuisance: number[] = [];
    let missingNuisance: string | null = null;
    for (const name of c.nuisance) {
      const v = p?.[name];
      if (typeof v === 'number' && Number.isFinite(v)) nuisance.push(v);
      else missingNuisance ??= name;
    }
    if (missingNuisance) {
      excluded.push({ subject, channel: null, reason: `no numeric value of nuisance covariate ${missingNuisance}` });
      continue;
    }
    const own = userExcluded.get(subject) ?? [];
    const whole = own.find((e) => e.channel === null);
    const channelHit = own.find((e) => e.channel !== null && channels.includes(e.channel));
    if (whole || channelHit) {
      const e = whole ?? channelHit!;
      excluded.push({ subject, channel: e.channel, reason: `excluded in the quality screen: ${e.reason}` });
      continue;
    }
    if (c.design !== 'paired' || !c.sessions) {
      const sessions = sessionsOf.get(subject)!;
      if (c.session === undefined && sessions.size > 1) {
        throw new ContrastDataError(`subject ${subject} has several sessions (${[...sessions].join(', ')}): say which one with "session"`);
      }
    }
    candidates.push({ subject, group, covariate, nuisance });
  }

  // values per candidate, written straight into the subjects × points matrices (one per
  // condition) at the next kept row; a subject with any channel missing or flagged is left out,
  // with the reason, and its row is reused. A measure that may be missing per channel × point
  // (layout.missingAllowed: no peak in the band) writes NaN there instead, and its channel
  // average is the mean over the channels with a value (NaN when none has one).
  const P = layout.freqsHz.length;
  const nCh = c.channelAverage ? 1 : channels.length;
  const width = nCh * P;
  const matrices = conds.map(() => new Float64Array(candidates.length * width));
  const kept: typeof candidates = [];
  const scratch = new Float64Array(P);
  const present = new Int32Array(P); // channels with a value per point (channel average of a measure that may be missing)
  for (const cand of candidates) {
    let reason: { channel: string | null; text: string } | null = null;
    const onlySession = sessionsOf.get(cand.subject)!.values().next().value ?? null;
    for (let di = 0; di < conds.length && !reason; di++) {
      const cond = conds[di];
      const session = cond.session ?? onlySession;
      const values = matrices[di].subarray(kept.length * width, (kept.length + 1) * width);
      values.fill(0);
      present.fill(0);
      for (let ci = 0; ci < channels.length && !reason; ci++) {
        const ch = channels[ci];
        const k = key(cand.subject, session, ch, cond.stage);
        const row = spectra.get(k);
        if (!row) {
          reason = { channel: ch, text: `no ${cond.name} spectrum for ${ch}` };
          break;
        }
        if (row.flagged) {
          reason = { channel: ch, text: `${cond.name} spectrum of ${ch} flagged: ${row.flagReason ?? 'flagged at ingest'}` };
          break;
        }
        const why = measureValues(c, layout, axis, row.power, aperiodic.get(k), peaks.get(k) ?? [], scratch);
        if (why) {
          reason = { channel: ch, text: `${cond.name}, ${ch}: ${why}` };
          break;
        }
        for (let j = 0; j < P; j++) {
          if (layout.missingAllowed) {
            const v = scratch[j];
            if (c.channelAverage && !Number.isNaN(v)) {
              values[j] += v;
              present[j]++;
            } else if (!c.channelAverage) values[ci * P + j] = v;
            continue;
          }
          if (!Number.isFinite(scratch[j])) {
            reason = { channel: ch, text: `${cond.name}, ${ch}: measure is not finite at ${layout.freqsHz[j]} Hz` };
            break;
          }
          // channel average: mean of the measure over the channels (common practice)
          if (c.channelAverage) values[j] += scratch[j] / channels.length;
          else values[ci * P + j] = scratch[j];
        }
      }
      // mean over the channels with a value
      if (layout.missingAllowed && c.channelAverage) for (let j = 0; j < P; j++) values[j] = present[j] > 0 ? values[j] / present[j] : NaN;
    }
    if (reason) {
      excluded.push({ subject: cand.subject, channel: reason.channel, reason: reason.text });
      continue;
    }
    kept.push(cand);
  }

  // 'recorded' spectra of one channel recorded against different references are not pooled
  if (c.reference === 'recorded' && data.recordedReferences) {
    const used = kept.flatMap((k) => conds.map((d) => ({ subject: k.subject, session: d.session ?? sessionsOf.get(k.subject)!.values().next().value ?? null })));
    const mixed = mixedRecordedReferences(channels, used, data.recordedReferences);
    if (mixed) throw new ContrastDataError(mixed);
  }

  checkEnoughSubjects(c, kept, excluded);
  checkNuisanceVaries(c, kept);
  const n = kept.length;
  const data0 = matrices[0].subarray(0, n * width);
  let design: Design;
  const nPerGroup: Record<string, number> = {};
  if (c.design === 'groups') {
    const [g0, g1] = c.groups!;
    const group = kept.map((k) => (k.group === g1 ? 1 : 0));
    nPerGroup[g0] = group.filter((g) => g === 0).length;
    nPerGroup[g1] = group.filter((g) => g === 1).length;
    design = { kind: 'groups', group, groupNames: [g0, g1], nuisance: nuisanceColumns(c, kept) };
  } else if (c.design === 'paired') {
    design = { kind: 'paired', second: matrices[1].subarray(0, n * width), conditionNames: [conds[0].name, conds[1].name] };
    nPerGroup.pairs = n;
  } else {
    design = { kind: 'covariate', covariate: kept.map((k) => k.covariate!), covariateName: c.covariate, nuisance: nuisanceColumns(c, kept) };
    nPerGroup.subjects = n;
  }
  if (design.kind !== 'paired' && design.nuisance && design.nuisance.length === 0) delete design.nuisance;
  const pointChannels = c.channelAverage ? [`mean(${channels.join(',')})`] : channels;
  const input: PermutationTestInput = {
    channels: pointChannels,
    freqsHz: layout.freqsHz,
    data: data0,
    design,
    ...(c.channelAverage || channels.length < 2 ? { channelNeighbours: null } : {}),
    ...(layout.missingAllowed ? { allowMissing: true } : {}),
  };
  return { input, layout, subjects: kept.map((k) => ({ subject: k.subject, group: k.group })), excluded, nPerGroup, channels: pointChannels };
}

function nuisanceColumns(c: Contrast, kept: { nuisance: number[] }[]): { name: string; values: number[] }[] {
  return c.nuisance.map((name, i) => ({ name, values: kept.map((k) => k.nuisance[i]) }));
}
