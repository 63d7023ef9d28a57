/**
 * Re-referencing of recorded EEG channels (pure, no I/O).
 *
 * A recording is planned once (`planReferences`), then each epoch is re-referenced into reused
 * Float32Array buffers (`Rereferencer.apply`). Every output channel is
 *   out[t] = x_source[t] − r[t],   r[t] = Σ_j w_j · x_j[t]   (one reference signal per plan entry)
 * so a common average costs one pass over the scalp channels per epoch, not one per output; an
 * output without a reference signal is the channel as recorded.
 *
 * What the montage supports is decided from the channel labels (their parsed electrode and
 * reference, and what that derivation is: classifyDerivation in src/core/montage/labels.ts):
 *  - monopolar: every selected EEG channel has the same reference (all unnamed, e.g. "EEG C3", or
 *    all "-REF", or all "-M2"). Such a montage supports every reference below; a mastoid or scalp
 *    electrode that *is* the common reference has the signal 0 against it (its potential relative
 *    to itself), so "C3-M2, M1-M2" still gives linked mastoids: C3 − 0.5·M1.
 *  - derivations against different references (e.g. "C3-M2", "C4-M1", "Pz-Oz"): the common
 *    reference is unknown, so nothing is computed across channels of different references. A
 *    derivation that already is a reference scheme is stored under it as recorded: C3-M2, C4-M1,
 *    C3-A2 (the AASM derivations) under contralateral-mastoid; C3-M1M2 under linked-mastoids;
 *    a scalp-to-scalp pair (Pz-Oz) under bipolar. Average is skipped with a reason — never faked
 *    from the derivations.
 * Rules (common practice; choices of ours are marked):
 *  - linked-mastoids: ch − (M1 + M2)/2 (A1/A2 accepted for M1/M2). Outputs: the EEG scalp
 *    channels. Without both mastoids against the common reference: the channels recorded
 *    against linked mastoids, as recorded.
 *  - contralateral-mastoid: left-hemisphere (odd-numbered) ch − M2, right (even) ch − M1
 *    (AASM derivations C4-M1, C3-M2). Midline (z) channels have no contralateral side: our rule
 *    leaves them out of this reference (they remain in 'recorded' and 'linked-mastoids').
 *    Without both mastoids against the common reference: the channels recorded against the
 *    contralateral mastoid, as recorded.
 *  - average: ch − mean over the EEG scalp channels (type EEG with a 10-10 position; mastoids,
 *    EOG, EMG, ECG and unknown sites excluded); a scalp electrode that is the common reference
 *    enters the mean as 0. Our rule: at least 3 scalp sites, otherwise skipped.
 *  - recorded: every given channel as stored, named by its electrode (or its label if none); an
 *    EEG scalp-to-scalp derivation by both electrodes (Pz-Oz).
 *  - bipolar: the scalp-to-scalp derivations as recorded, and user-given pairs "F3-C3" = F3 − C3,
 *    both against the same reference (a pair recorded as such is not computed again).
 * A derivation stored under a reference keeps the first channel of a name (C3-M2 before a later
 * C3-A2, which is skipped with a reason). Channels combined must share one sampling rate;
 * otherwise the reference is skipped.
 */
import { classifyDerivation, derivationName, hemisphere, MASTOIDS, type DerivationKind } from './labels.ts';
import { isScalpSite } from './positions.ts';

export { hemisphere };

export type ReferenceKind = 'recorded' | 'linked-mastoids' | 'contralateral-mastoid' | 'average' | 'bipolar';

export const REFERENCE_KINDS: readonly ReferenceKind[] = ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'];

/** One recorded channel as the planner needs it (the fields of parseChannelLabel plus fs). */
export interface MontageChannel {
  /** Label as stored in the file. */
  raw: string;
  /** Signal type, e.g. 'EEG', 'EOG', 'EMG', 'ECG', 'MISC'. */
  type: string;
  /** Electrode name (C3, M1) or null when the label names none. */
  electrode: string | null;
  /** Reference electrode named in the label (M2 in "C3-M2", REF in "C3-REF"), null if none. */
  reference: string | null;
  /** Sampling rate, Hz. */
  fsHz: number;
}

export interface ReferenceSignal {
  /** Indices into the planned channel list. */
  indices: Int32Array;
  weights: Float64Array;
}

export interface PlannedOutput {
  /** Output channel name: the electrode (C3), or the pair for bipolar (F3-C3). */
  channel: string;
  /** Index of the channel the reference is subtracted from. */
  source: number;
  /** Index into plan.signals, or −1 for none (the channel as recorded). */
  signal: number;
  /** Electrode or expression the output is referred to, e.g. 'M1', 'M1+M2', 'average', 'C3'. */
  referredTo: string | null;
}

export interface ReferencePlan {
  reference: ReferenceKind;
  outputs: PlannedOutput[];
  signals: ReferenceSignal[];
  fsHz: number | null;
}

export interface ReferenceSkip {
  reference: ReferenceKind;
  reason: string;
}

export interface ReferenceRequest {
  references: readonly ReferenceKind[];
  /** Bipolar pairs "A-B" (electrode names) to compute for 'bipolar', besides the scalp-to-scalp derivations recorded as such. */
  bipolarPairs?: readonly string[];
}

export class ReferencePlanError extends Error {
  override name = 'ReferencePlanError';
}

const norm = (s: string | null) => (s == null ? null : s.trim().toUpperCase());

/** Name of a channel as recorded: both electrodes of an EEG scalp-to-scalp derivation (Pz-Oz), else the electrode, else the label. */
function recordedName(c: MontageChannel): string {
  if (!c.electrode) return c.raw.trim();
  return c.type.toUpperCase() === 'EEG' ? derivationName(c.electrode, classifyDerivation(c.electrode, c.reference)) : c.electrode;
}

/**
 * Plans the requested references for one recording. Returns one plan per supported reference and
 * one skip, with a plain reason, per reference (or bipolar pair) the montage cannot support.
 */
export function planReferences(channels: readonly MontageChannel[], request: ReferenceRequest): { plans: ReferencePlan[]; skips: ReferenceSkip[] } {
  const plans: ReferencePlan[] = [];
  const skips: ReferenceSkip[] = [];
  for (const r of request.references) {
    if (!REFERENCE_KINDS.includes(r)) throw new ReferencePlanError(`unknown reference '${r}' (one of ${REFERENCE_KINDS.join(', ')})`);
  }
  const eeg = channels.map((c, i) => ({ c, i })).filter(({ c }) => c.type.toUpperCase() === 'EEG' && c.electrode);
  const refs = new Set(eeg.map(({ c }) => norm(c.reference)));
  const monopolar = refs.size <= 1;
  const commonRef = monopolar && refs.size === 1 ? [...refs][0] : null;
  const byElectrode = new Map<string, number>();
  for (const { c, i } of eeg) {
    const e = norm(c.electrode)!;
    const key = MASTOIDS[e] ?? e;
    if (!byElectrode.has(key)) byElectrode.set(key, i);
  }
  // the references as the labels spell them, the first spelling of each
  const spelled = new Map<string | null, string>();
  for (const { c } of eeg) if (!spelled.has(norm(c.reference))) spelled.set(norm(c.reference), c.reference?.trim() ?? 'none');
  const notMonopolar = `channels are stored as derivations against different references (${[...spelled.values()].join(', ')}); the common reference is unknown`;
  /** Index of an electrode, 'zero' when it is the common reference, undefined when missing. */
  const locate = (electrode: string): number | 'zero' | undefined => {
    const e = MASTOIDS[electrode.toUpperCase()] ?? electrode.toUpperCase();
    const ref = commonRef == null ? null : (MASTOIDS[commonRef] ?? commonRef);
    if (ref === e) return 'zero';
    return byElectrode.get(e);
  };
  const fsOf = (indices: number[]) => {
    const rates = new Set(indices.map((i) => channels[i].fsHz));
    return rates.size === 1 ? [...rates][0] : null;
  };
  const scalp = eeg.filter(({ c }) => isScalpSite(c.electrode!));
  const kinds = channels.map((c) => (c.type.toUpperCase() === 'EEG' && c.electrode ? classifyDerivation(c.electrode, c.reference) : null));
  /** The EEG channels recorded as a derivation of one kind, as pass-through outputs; the first of a name is kept, later ones skipped with a reason. */
  const stored = (kind: DerivationKind & ReferenceKind): PlannedOutput[] => {
    const outputs: PlannedOutput[] = [];
    for (const { c, i } of eeg) {
      const d = kinds[i]!;
      if (d.kind !== kind) continue;
      const channel = derivationName(c.electrode!, d);
      const first = outputs.find((o) => o.channel === channel);
      if (first) {
        skips.push({
          reference: kind,
          reason: `${c.electrode}-${c.reference}: ${channel} is already stored from ${channels[first.source].electrode}-${channels[first.source].reference}`,
        });
        continue;
      }
      outputs.push({ channel, source: i, signal: -1, referredTo: d.referredTo });
    }
    return outputs;
  };

  for (const reference of new Set(request.references)) {
    if (reference === 'recorded') {
      plans.push({
        reference,
        // every selected channel as stored (EOG/EMG too, if the caller selected them)
        outputs: channels.map((c, i) => ({ channel: recordedName(c), source: i, signal: -1, referredTo: c.reference })),
        signals: [],
        fsHz: channels.length > 0 ? fsOf(channels.map((_, i) => i)) : null,
      });
      continue;
    }
    if (reference === 'bipolar') {
      const pairs = request.bipolarPairs ?? [];
      const plan: ReferencePlan = { reference, outputs: [], signals: [], fsHz: null };
      // scalp-to-scalp derivations as recorded (Pz-Oz), then the pairs asked for
      for (const o of stored('bipolar')) {
        const fs = channels[o.source].fsHz;
        if (plan.fsHz != null && plan.fsHz !== fs) {
          skips.push({ reference, reason: `${o.channel}: recorded at ${fs} Hz, other bipolar channels at ${plan.fsHz} Hz` });
          continue;
        }
        plan.fsHz = fs;
        plan.outputs.push(o);
      }
      if (pairs.length === 0 && plan.outputs.length === 0) {
        skips.push({ reference, reason: 'no bipolar pairs were given and no scalp-to-scalp derivation is recorded' });
        continue;
      }
      for (const pair of pairs) {
        const m = /^\s*([A-Za-z0-9]+)\s*-\s*([A-Za-z0-9]+)\s*$/.exec(pair);
        if (!m) throw new ReferencePlanError(`invalid bipolar pair '${pair}' (expected e.g. 'F3-C3')`);
        if (plan.outputs.some((o) => o.channel.toUpperCase() === `${m[1]}-${m[2]}`.toUpperCase())) continue; // recorded as such
        const a = locate(m[1]);
        const b = locate(m[2]);
        if (a === undefined || b === undefined) {
          skips.push({ reference, reason: `pair ${pair}: electrode ${a === undefined ? m[1] : m[2]} is not among the EEG channels` });
          continue;
        }
        if (a === 'zero') {
          skips.push({ reference, reason: `pair ${pair}: ${m[1]} is the recording reference, so the pair is ${m[2]} with inverted sign` });
          continue;
        }
        if (b !== 'zero' && norm(channels[a].reference) !== norm(channels[b].reference)) {
          skips.push({ reference, reason: `pair ${pair}: the two channels are recorded against different references` });
          continue;
        }
        const idx = b === 'zero' ? [a] : [a, b];
        const fs = fsOf(idx);
        if (fs == null || (plan.fsHz != null && plan.fsHz !== fs)) {
          skips.push({ reference, reason: `pair ${pair}: channels of different sampling rates` });
          continue;
        }
        plan.fsHz = fs;
        let signal = -1;
        if (b !== 'zero') {
          plan.signals.push({ indices: Int32Array.of(b), weights: Float64Array.of(1) });
          signal = plan.signals.length - 1;
        }
        plan.outputs.push({ channel: `${m[1]}-${m[2]}`, source: a, signal, referredTo: m[2] });
      }
      if (plan.outputs.length > 0) plans.push(plan);
      continue;
    }
    const m1 = monopolar ? locate('M1') : undefined;
    const m2 = monopolar ? locate('M2') : undefined;
    if ((reference === 'linked-mastoids' || reference === 'contralateral-mastoid') && (m1 === undefined || m2 === undefined)) {
      // not computable: the derivations recorded against this scheme, as recorded
      const outputs = stored(reference);
      const fs = fsOf(outputs.map((o) => o.source));
      if (outputs.length > 0 && fs != null) {
        plans.push({ reference, outputs, signals: [], fsHz: fs });
        continue;
      }
      if (outputs.length > 0) skips.push({ reference, reason: 'the derivations recorded against this reference have different sampling rates' });
      else if (!monopolar) skips.push({ reference, reason: notMonopolar });
      else {
        const missing = [m1 === undefined ? 'M1/A1' : null, m2 === undefined ? 'M2/A2' : null].filter(Boolean).join(' and ');
        skips.push({ reference, reason: `mastoid ${missing} not recorded` });
      }
      continue;
    }
    if (!monopolar) {
      skips.push({ reference, reason: notMonopolar });
      continue;
    }
    if ((reference === 'linked-mastoids' || reference === 'contralateral-mastoid') && m1 !== undefined && m2 !== undefined) {
      const plan: ReferencePlan = { reference, outputs: [], signals: [], fsHz: null };
      const signalOf = (parts: (number | 'zero')[]): ReferenceSignal => {
        const idx = parts.filter((p): p is number => p !== 'zero');
        // linked: r = (M1 + M2)/2; a mastoid that is the common reference contributes 0
        const w = reference === 'linked-mastoids' ? 0.5 : 1;
        return { indices: Int32Array.from(idx), weights: Float64Array.from(idx, () => w) };
      };
      if (reference === 'linked-mastoids') plan.signals.push(signalOf([m1, m2]));
      else plan.signals.push(signalOf([m1]), signalOf([m2]));
      const used = [m1, m2].filter((p): p is number => p !== 'zero');
      for (const { c, i } of scalp) {
        if (reference === 'linked-mastoids') {
          plan.outputs.push({ channel: c.electrode!, source: i, signal: 0, referredTo: 'M1+M2' });
          used.push(i);
          continue;
        }
        const side = hemisphere(c.electrode!);
        if (side !== 'left' && side !== 'right') continue; // midline: no contralateral side (our rule)
        plan.outputs.push({ channel: c.electrode!, source: i, signal: side === 'left' ? 1 : 0, referredTo: side === 'left' ? 'M2' : 'M1' });
        used.push(i);
      }
      const fs = fsOf(used);
      if (plan.outputs.length === 0) skips.push({ reference, reason: 'no lateral scalp EEG channels to refer to the mastoids' });
      else if (fs == null) skips.push({ reference, reason: 'mastoid and scalp channels have different sampling rates' });
      else plans.push({ ...plan, fsHz: fs });
      continue;
    }
    // average
    const zeroScalp = commonRef != null && isScalpSite(commonRef) && !byElectrode.has(commonRef) ? 1 : 0;
    const nSites = scalp.length + zeroScalp;
    if (nSites < 3) {
      skips.push({ reference, reason: `average reference needs at least 3 scalp EEG sites, found ${nSites}` });
      continue;
    }
    const idx = scalp.map(({ i }) => i);
    const fs = fsOf(idx);
    if (fs == null) {
      skips.push({ reference, reason: 'scalp channels have different sampling rates' });
      continue;
    }
    plans.push({
      reference,
      // r = (1/n) Σ_scalp x_j, the common reference site (if scalp) counted as 0
      signals: [{ indices: Int32Array.from(idx), weights: Float64Array.from(idx, () => 1 / nSites) }],
      outputs: scalp.map(({ c, i }) => ({ channel: c.electrode!, source: i, signal: 0, referredTo: 'average' })),
      fsHz: fs,
    });
  }
  return { plans, skips };
}

/** Applies one plan epoch by epoch into buffers it owns (reused for every call). */
export class Rereferencer {
  readonly plan: ReferencePlan;
  private readonly out: Float32Array[];
  /** 'recorded': the input arrays of the outputs, refilled per call */
  private readonly passed: ArrayLike<number>[];
  private readonly signalBuf: Float64Array[];
  private readonly length: number;

  /** `length`: samples per epoch (at the plan's sampling rate). */
  constructor(plan: ReferencePlan, length: number) {
    this.plan = plan;
    this.length = length;
    const copies = plan.reference !== 'recorded';
    // arrays filled by push, not made by .map(): those were seen to come out with another hidden
    // class per recording, and each new one threw away apply's optimised code
    this.out = [];
    if (copies) for (let k = 0; k < plan.outputs.length; k++) this.out.push(new Float32Array(length));
    this.passed = copies ? [] : new Array(plan.outputs.length);
    this.signalBuf = [];
    for (let s = 0; s < plan.signals.length; s++) this.signalBuf.push(new Float64Array(length));
  }

  /**
   * Re-referenced epoch, one array per plan output (same order). `data[i]` is the epoch of the
   * planned channel i. For 'recorded' the input arrays themselves are returned (no copy).
   * The returned list (and for the other references its arrays) is refilled by the next call.
   */
  apply(data: readonly ArrayLike<number>[]): ArrayLike<number>[] {
    const plan = this.plan;
    const n = this.length;
    if (plan.reference === 'recorded') {
      for (let k = 0; k < plan.outputs.length; k++) this.passed[k] = data[plan.outputs[k].source];
      return this.passed;
    }
    for (let s = 0; s < plan.signals.length; s++) {
      const { indices, weights } = plan.signals[s];
      const r = this.signalBuf[s];
      r.fill(0);
      // r[t] = Σ_j w_j · x_j[t]
      for (let j = 0; j < indices.length; j++) {
        const x = data[indices[j]];
        const w = weights[j];
        for (let t = 0; t < n; t++) r[t] += w * x[t];
      }
    }
    for (let k = 0; k < plan.outputs.length; k++) {
      const o = plan.outputs[k];
      const x = data[o.source];
      const y = this.out[k];
      if (o.signal < 0) {
        for (let t = 0; t < n; t++) y[t] = x[t];
        continue;
      }
      const r = this.signalBuf[o.signal];
      // out[t] = x[t] − r[t]
      for (let t = 0; t < n; t++) y[t] = x[t] - r[t];
    }
    return this.out;
  }
}
