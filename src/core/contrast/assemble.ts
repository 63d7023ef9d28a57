/**
 * Turns a contrast and the rows it reads into the statistics engine's input: which subjects take
 * part (and which are left out, with the reason), the measure per subject × channel × point, and
 * the design. Pure; shared by the command line and the dashboard's worker.
 */
import { frontToBack, storedPositionOf } from '../montage/channel-order.ts';
import { INDIVIDUAL_BAND_MEASURES, type Contrast } from './spec.ts';
import type { AperiodicRow, ContrastData, Exclusion, PeakRow, SpectrumRow } from './data.ts';
import { contrastConditions } from './conditions.ts';
import { individualBands, type IndividualCentre } from './individual-bands.ts';
import { measureLayout, measureValues, type MeasureLayout } from './measure.ts';
import type { Band } from '../spectrum/bands.ts';
import { mixedRecordedReferences } from './recorded-references.ts';
import { ContrastDataError } from './data-error.ts';
import { channelLayout, type ChannelLayout } from './channel-layout.ts';
import { checkColumns, checkEnoughSubjects } from './participant-checks.ts';
import { checkCollinearity, nuisanceModel, type NuisanceValue } from './nuisance-coding.ts';
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
  /** individual bands: each analysed subject's centre and edges per condition and band (empty for fixed bands) */
  individualCentres: IndividualCentre[];
  /** the channels' positions and where their neighbours came from (channel-layout.ts) */
  channelLayout: ChannelLayout;
}

/** The band a subject uses in a condition (index into contrastConditions) in place of a band of the layout. */
export type BandResolver = (subject: string, condition: number, band: Band) => Band;

export { ContrastDataError };

function key(subject: string, session: string | null, channel: string, stage: Stage): string {
  return `${subject}\u0000${session ?? ''}\u0000${channel}\u0000${stage}`;
}

/**
 * The contrast's subjects × points from the rows read. Band measures use each subject's own band
 * when the contrast's bands are individual (individual-bands.ts), or where `bandsFor` says (the
 * band check's flanks follow the subject's band).
 */
export function assembleContrast(c: Contrast, data: ContrastData, bandsFor?: BandResolver): AssembledContrast {
  const axis = data.spectra;
  const layout = measureLayout(c, axis);
  const conds = contrastConditions(c);
  const excluded: Exclusion[] = [];
  let resolve = bandsFor ?? null;
  let centres: IndividualCentre[] = [];
  if (!resolve && c.bandDefinition === 'individual' && INDIVIDUAL_BAND_MEASURES.includes(c.measure)) {
    const found = new Map(layout.bands.map((b) => [b, individualBands(c, data, b)]));
    centres = [...found.values()].flatMap((f) => f.centres);
    resolve = (subject, condition, band) => found.get(band)?.bands.get(subject)?.[condition] ?? band;
  }

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

  // channels: those asked for, or every channel stored for this stage, front to back, then left to right
  const stored = frontToBack(
    [...new Set(data.spectra.rows.filter((r) => conds.some((d) => d.stage === r.stage)).map((r) => r.channel))],
    storedPositionOf(data.positions ?? []),
  );
  const channels = c.channels === 'all' ? stored : c.channels;
  for (const ch of channels)
    if (!stored.includes(ch))
      throw new ContrastDataError(`channel ${ch} has no stored ${conds.map((d) => d.stage).join('/')} spectra for reference ${c.reference}`);
  if (channels.length === 0) throw new ContrastDataError(`no stored spectra for stage ${c.stage}, reference ${c.reference}, averaging ${c.averaging}`);

  // the columns the design names exist, with values of the right kind
  checkColumns(c, data.participants);

  // who takes part, by design
  const participants = new Map(data.participants.map((p) => [String(p.subject), p]));
  // exclusions the contrast carries and those given beside it (a TSV, a browser's list); one of
  // another stage, or of a channel the contrast does not use, does not apply
  const userExcluded = new Map<string, Exclusion[]>();
  const carried = c.exclusions.map((x): Exclusion => ({
    subject: x.subject,
    channel: x.channel ?? null,
    ...(x.stage ? { stage: x.stage } : {}),
    reason: x.reason,
  }));
  for (const e of [...data.exclusions, ...carried]) {
    if (e.stage !== undefined && !conds.some((d) => d.stage === e.stage)) continue;
    if (e.channel !== null && !channels.includes(e.channel)) continue;
    if (!userExcluded.has(e.subject)) userExcluded.set(e.subject, []);
    userExcluded.get(e.subject)!.push(e);
  }
  // a channel exclusion is missing data for that channel where the statistic allows missing values
  // (src/core/stats/missing.ts: two groups without nuisance covariates, paired); elsewhere the subject is left out
  const missingOk = c.design === 'paired' || (c.design === 'groups' && c.nuisance.length === 0 && c.statistic !== 'linear-model-t');
  const stageOf = (e: Exclusion) => (e.stage ? { stage: e.stage } : {});
  const candidates: { subject: string; group: string | null; covariate: number | null; nuisance: NuisanceValue[]; channelsOut: Exclusion[] }[] = [];
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
    // a number, or a level of a categorical covariate (text: dummy-coded in nuisance-coding.ts)
    const nuisance: NuisanceValue[] = [];
    let missingNuisance: string | null = null;
    for (const name of c.nuisance) {
      const v = p?.[name];
      if ((typeof v === 'number' && Number.isFinite(v)) || (typeof v === 'string' && v.trim() !== '')) nuisance.push(v);
      else missingNuisance ??= name;
    }
    if (missingNuisance) {
      excluded.push({ subject, channel: null, reason: `no value of nuisance covariate ${missingNuisance}` });
      continue;
    }
    const own = userExcluded.get(subject) ?? [];
    const whole = own.find((e) => e.channel === null);
    if (whole) {
      excluded.push({ subject, channel: null, ...stageOf(whole), reason: `excluded: ${whole.reason}` });
      continue;
    }
    const channelsOut = own.filter((e) => e.channel !== null);
    if (channelsOut.length > 0 && !missingOk) {
      const e = channelsOut[0];
      const needs = c.design === 'covariate' ? 'a covariate design' : 'a design with nuisance covariates';
      excluded.push({
        subject,
        channel: e.channel,
        ...stageOf(e),
        reason: `excluded: ${e.reason} (${needs} needs a value at every channel, so the subject is left out)`,
      });
      continue;
    }
    if (c.design !== 'paired' || !c.sessions) {
      const sessions = sessionsOf.get(subject)!;
      if (c.session === undefined && sessions.size > 1) {
        throw new ContrastDataError(`subject ${subject} has several sessions (${[...sessions].join(', ')}): say which one with "session"`);
      }
    }
    candidates.push({ subject, group, covariate, nuisance, channelsOut });
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
  let anyExcludedChannel = false;
  for (const cand of candidates) {
    let reason: { channel: string | null; text: string } | null = null;
    const onlySession = sessionsOf.get(cand.subject)!.values().next().value ?? null;
    const isOut = (ch: string, stage: Stage) => cand.channelsOut.some((e) => e.channel === ch && (e.stage === undefined || e.stage === stage));
    let wroteMissing = false;
    for (let di = 0; di < conds.length && !reason; di++) {
      const cond = conds[di];
      const own = resolve ? { ...layout, bands: layout.bands.map((b) => resolve(cand.subject, di, b)) } : layout;
      const session = cond.session ?? onlySession;
      const values = matrices[di].subarray(kept.length * width, (kept.length + 1) * width);
      values.fill(0);
      present.fill(0);
      const nLeft = channels.filter((ch) => !isOut(ch, cond.stage)).length;
      if (nLeft === 0) reason = { channel: null, text: `excluded: every channel of ${cond.name} is on the exclusion list` };
      for (let ci = 0; ci < channels.length && !reason; ci++) {
        const ch = channels[ci];
        if (isOut(ch, cond.stage)) {
          // missing data: NaN at the channel's points, or left out of the channel average
          if (!c.channelAverage) {
            values.fill(NaN, ci * P, (ci + 1) * P);
            wroteMissing = true;
          }
          continue;
        }
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
        const why = measureValues(c, own, axis, row.power, aperiodic.get(k), peaks.get(k) ?? [], scratch);
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
          if (c.channelAverage) values[j] += scratch[j] / nLeft;
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
    const stays = c.channelAverage ? 'left out of the channel average; the subject stays' : 'that channel is missing; the subject stays';
    for (const e of cand.channelsOut)
      excluded.push({ subject: cand.subject, channel: e.channel, ...stageOf(e), reason: `excluded: ${e.reason} (${stays})`, subjectStays: true });
    anyExcludedChannel ||= wroteMissing;
    kept.push(cand);
  }

  // 'recorded' spectra of one channel recorded against different references are not pooled
  if (c.reference === 'recorded' && data.recordedReferences) {
    const used = kept.flatMap((k) =>
      conds.map((d) => ({ subject: k.subject, session: d.session ?? sessionsOf.get(k.subject)!.values().next().value ?? null })),
    );
    const mixed = mixedRecordedReferences(channels, used, data.recordedReferences);
    if (mixed) throw new ContrastDataError(mixed);
  }

  checkEnoughSubjects(c, kept, excluded);
  const nuisance = c.design === 'paired' ? [] : nuisanceModel(c.nuisance, kept);
  if (nuisance.length > 0)
    checkCollinearity(
      nuisance,
      c.design === 'groups' ? kept.map((k) => (k.group === c.groups![1] ? 1 : 0)) : kept.map((k) => k.covariate!),
      c.design === 'groups' ? `the group (${c.groupColumn})` : `the covariate ${c.covariate}`,
    );
  const n = kept.length;
  const data0 = matrices[0].subarray(0, n * width);
  let design: Design;
  const nPerGroup: Record<string, number> = {};
  if (c.design === 'groups') {
    const [g0, g1] = c.groups!;
    const group = kept.map((k) => (k.group === g1 ? 1 : 0));
    nPerGroup[g0] = group.filter((g) => g === 0).length;
    nPerGroup[g1] = group.filter((g) => g === 1).length;
    design = { kind: 'groups', group, groupNames: [g0, g1], nuisance: nuisance.map((x) => x.column) };
  } else if (c.design === 'paired') {
    design = { kind: 'paired', second: matrices[1].subarray(0, n * width), conditionNames: [conds[0].name, conds[1].name] };
    nPerGroup.pairs = n;
  } else {
    design = { kind: 'covariate', covariate: kept.map((k) => k.covariate!), covariateName: c.covariate, nuisance: nuisance.map((x) => x.column) };
    nPerGroup.subjects = n;
  }
  if (design.kind !== 'paired' && design.nuisance && design.nuisance.length === 0) delete design.nuisance;
  const pointChannels = c.channelAverage ? [`mean(${channels.join(',')})`] : channels;
  // neighbours from the contrast's table or the positions stored for the recordings used
  const used = new Set(kept.flatMap((k) => conds.map((d) => `${k.subject}\u0000${d.session ?? sessionsOf.get(k.subject)!.values().next().value ?? ''}`)));
  const spatial = !c.channelAverage && channels.length >= 2;
  const placed = channelLayout(c, channels, data, used, spatial);
  const channelLayoutOfPoints: ChannelLayout = c.channelAverage ? { neighbours: 'none', positions: [null] } : placed.layout;
  const input: PermutationTestInput = {
    channels: pointChannels,
    freqsHz: layout.freqsHz,
    data: data0,
    design,
    channelNeighbours: placed.graph,
    ...(layout.missingAllowed || anyExcludedChannel ? { allowMissing: true } : {}),
  };
  const inAnalysis = new Set(kept.map((k) => k.subject));
  const individualCentres = centres.filter((x) => inAnalysis.has(x.subject));
  return {
    input,
    layout,
    subjects: kept.map((k) => ({ subject: k.subject, group: k.group })),
    excluded,
    nPerGroup,
    channels: pointChannels,
    individualCentres,
    channelLayout: channelLayoutOfPoints,
  };
}
