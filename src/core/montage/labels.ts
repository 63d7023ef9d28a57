// Channel labels of EDF files: type prefix, electrode and reference ("EEG C3-M2" → EEG, C3, M2).
// EDF+ 2003 §2.1.3.7 recommends "Type Sensor" labels such as "EEG Fpz-Cz"; electrode names
// follow the 10-20/10-10 system (ACNS guideline 2016), mastoids M1/M2, older earlobes A1/A2.
// Pure: no I/O.
import { isScalpSite } from './positions.ts';

export type ChannelType = 'EEG' | 'EOG' | 'EMG' | 'ECG' | 'RESP' | 'MISC';

export interface ChannelLabel {
  raw: string;
  type: ChannelType;
  /** Electrode or sensor name without the type prefix, 10-10 capitalisation where it is one (C3, Fp1, M1). */
  electrode: string;
  /** The part after '-' or ':' ("M2", "Ref"), or null when the label names no derivation. */
  reference: string | null;
}

// 10-10 rows (ACNS guideline 2016; extended names AF1…PO10 as in the 10-10 chart); numbers odd = left, even = right.
const ROWS: [string, number[], boolean][] = [
  ['Fp', [1, 2], true],
  ['AF', [1, 2, 3, 4, 5, 6, 7, 8, 9, 10], true],
  ['F', [1, 2, 3, 4, 5, 6, 7, 8, 9, 10], true],
  ['FT', [7, 8, 9, 10], false],
  ['FC', [1, 2, 3, 4, 5, 6], true],
  ['T', [3, 4, 5, 6, 7, 8, 9, 10], false], // T3–T6: older 10-20 names, kept as given (T3→T7, T4→T8, T5→P7, T6→P8)
  ['C', [1, 2, 3, 4, 5, 6], true],
  ['TP', [7, 8, 9, 10], false],
  ['CP', [1, 2, 3, 4, 5, 6], true],
  ['P', [1, 2, 3, 4, 5, 6, 7, 8, 9, 10], true],
  ['PO', [1, 2, 3, 4, 5, 6, 7, 8, 9, 10], true],
  ['O', [1, 2], true],
  ['I', [1, 2], true],
  ['N', [], true],
  ['A', [1, 2], false], // earlobes (older reference names)
  ['M', [1, 2], false], // mastoids
];

const CANONICAL = new Map<string, string>();
for (const [prefix, numbers, midline] of ROWS) {
  for (const n of numbers) CANONICAL.set(`${prefix}${n}`.toUpperCase(), `${prefix}${n}`);
  if (midline) CANONICAL.set(`${prefix}Z`.toUpperCase(), `${prefix}z`);
}

/** The 10-10 spelling of an electrode name (any capitalisation), or null if it is not one. */
export function canonicalElectrode(name: string): string | null {
  return CANONICAL.get(name.trim().toUpperCase()) ?? null;
}

const PREFIXES: Record<string, ChannelType> = { EEG: 'EEG', EOG: 'EOG', EMG: 'EMG', ECG: 'ECG', EKG: 'ECG', RESP: 'RESP', MISC: 'MISC' };

// Sensor words that give the type without a prefix (common practice in sleep recordings).
const WORDS: [RegExp, ChannelType][] = [
  [/\b(ecg|ekg)\b/i, 'ECG'],
  [/\b(eog|loc|roc|e1|e2)\b/i, 'EOG'], // E1/E2: the AASM names of the eye electrodes
  [/\b(emg|chin|leg)\d*\b/i, 'EMG'],
  [/\b(resp|thorax|thor|abdomen|abdo|airflow|flow|snore)\b/i, 'RESP'],
];

/**
 * Multiplier from a physical dimension to µV, or null when it is not a voltage; empty → 1 (µV
 * assumed). The micro prefix as µ (U+00B5), μ (U+03BC) or u; exports write units in either
 * case (uv, UV, mv), so case is ignored except that "M" (mega) is no voltage of a body signal.
 */
export function microvoltsPer(dimension: string): number | null {
  const d = dimension.trim();
  if (d === '' || /^(µ|μ|u)V$/i.test(d)) return 1;
  if (/^mV$/i.test(d) && d[0] === 'm') return 1e3;
  if (/^V$/i.test(d)) return 1e6;
  if (/^nV$/i.test(d)) return 1e-3;
  return null;
}

/** Voltage units (µV, uV, mV, V, nV in any case but mega): only these can carry EEG/EOG/EMG/ECG by name alone. */
function isVoltage(unit: string): boolean {
  return unit.trim() !== '' && microvoltsPer(unit) !== null;
}

/**
 * Splits an EDF channel label. Type, in this order: a leading type word (EEG, EOG, EMG, ECG/EKG,
 * RESP, MISC), also with a number or bracket right after it as the whole label (EEG2, EEG(sec)); a sensor word (ECG, LOC, chin, thorax…); a 10-20/10-10 electrode name → EEG;
 * otherwise MISC. Without a prefix, a physical dimension that is given and is not a voltage
 * (%, bpm, degC…) makes the channel MISC whatever its name.
 */
export function parseChannelLabel(label: string, physicalDimension?: string): ChannelLabel {
  const raw = label;
  let rest = label.trim();
  let type: ChannelType | null = null;
  const m = /^([A-Za-z]+)[\s_]+(.*)$/.exec(rest);
  if (m && PREFIXES[m[1].toUpperCase()] && m[2].trim() !== '') {
    type = PREFIXES[m[1].toUpperCase()];
    rest = m[2].trim();
  } else if (PREFIXES[rest.toUpperCase()]) {
    type = PREFIXES[rest.toUpperCase()];
  } else {
    // a type word with a number or a bracket right after it names the channel by its type ("EEG2", "EEG(sec)", "ECG2")
    const numbered = /^(EEG|EOG|EMG|ECG|EKG)(\d+|\([^()]*\))$/i.exec(rest);
    if (numbered) type = PREFIXES[numbered[1].toUpperCase()];
  }
  // Derivation: "C3-M2", "C4:A1"; the first separator splits electrode from reference.
  const sep = /[-:]/.exec(rest);
  let electrode = rest;
  let reference: string | null = null;
  if (sep && sep.index > 0 && sep.index < rest.length - 1) {
    electrode = rest.slice(0, sep.index).trim();
    reference = rest.slice(sep.index + 1).trim();
    reference = canonicalElectrode(reference) ?? reference;
  }
  const canonical = canonicalElectrode(electrode);
  if (canonical) electrode = canonical;
  if (type === null) {
    const voltageOrUnknown = physicalDimension === undefined || physicalDimension.trim() === '' || isVoltage(physicalDimension);
    const word = WORDS.find(([re]) => re.test(rest));
    if (!voltageOrUnknown) type = 'MISC';
    else if (word) type = word[1];
    else if (canonical) type = 'EEG';
    else type = 'MISC';
  }
  return { raw, type, electrode, reference };
}

/** Mastoids M1/M2 and the older ear-lobe names A1/A2, by the mastoid whose side they share. */
export const MASTOIDS: Readonly<Record<string, 'M1' | 'M2'>> = { M1: 'M1', A1: 'M1', M2: 'M2', A2: 'M2' };

/** 'left' for odd numbers, 'right' for even, 'midline' for z, null when not a lateral 10-10 name (M1/A1 left, M2/A2 right). */
export function hemisphere(electrode: string): 'left' | 'right' | 'midline' | null {
  const e = electrode.trim().toUpperCase();
  if (MASTOIDS[e]) return MASTOIDS[e] === 'M1' ? 'left' : 'right';
  if (/Z$/.test(e)) return 'midline';
  const m = /(\d+)$/.exec(e);
  if (!m) return null;
  return Number(m[1]) % 2 === 1 ? 'left' : 'right';
}

/**
 * What an EEG channel is recorded against, read from its label (electrode and reference as
 * parseChannelLabel splits them). 10-20 sides (ACNS guideline 2016): odd left, even right, z
 * midline; M1/A1 left, M2/A2 right. Rules (ours where the trade has no spelling):
 *  - common: no reference in the label ("C3"), or the words REF/Reference ("C3-REF"): the
 *    amplifier's common reference, its site not named.
 *  - contralateral-mastoid: a lateral scalp electrode against the mastoid or ear lobe of the
 *    other side (C3-M2, C4-M1, older C3-A2): the AASM derivations F4-M1, C4-M1, O2-M1 and
 *    backups F3-M2, C3-M2, O1-M2 (AASM Manual for the Scoring of Sleep, v2.x).
 *  - ipsilateral-mastoid (C3-M1) and midline-mastoid (Pz-M1): one mastoid, no standard scheme.
 *  - linked-mastoids: a scalp electrode against both mastoids or both ear lobes, spelled with
 *    both names: M1M2, M1+M2, A1A2, A1+A2 (either order), or their average written out,
 *    (A1+A2)/2 (white space ignored). Abbreviations without a standard spelling (LE, LM,
 *    "linked") are not guessed: they are 'other'.
 *  - bipolar: both electrodes 10-10 scalp sites (Fpz-Cz, Pz-Oz, C3-Cz).
 *  - other: anything else (a mastoid or eye electrode against something, AVG, LE…).
 */
export type DerivationKind = 'common' | 'contralateral-mastoid' | 'ipsilateral-mastoid' | 'midline-mastoid' | 'linked-mastoids' | 'bipolar' | 'other';

export interface Derivation {
  kind: DerivationKind;
  /** What the channel is referred to: null for the common reference; M1, M2, A1, A2; M1+M2 or A1+A2; a scalp electrode (Oz); else the label's text (AVG). */
  referredTo: string | null;
}

const COMMON_WORDS = /^(REF|REFERENCE)$/i;
// both mastoids or ear lobes: M1M2, M1+M2, and their average written out, (M1+M2)/2 (white space ignored)
const LINKED = /^(M1\+?M2|M2\+?M1|A1\+?A2|A2\+?A1|\((M1\+M2|M2\+M1|A1\+A2|A2\+A1)\)\/2)$/i;

/**
 * The reference a label names, in one spelling for comparisons: null for the common reference
 * (none named, REF, Reference), M1+M2 / A1+A2 for linked mastoids / ear lobes, the 10-10
 * spelling of an electrode, else the text in capitals.
 */
export function referenceKey(reference: string | null): string | null {
  if (reference === null) return null;
  const r = reference.trim();
  if (r === '' || COMMON_WORDS.test(r)) return null;
  const packed = r.replace(/\s+/g, '');
  if (LINKED.test(packed)) return /^\(?A/i.test(packed) ? 'A1+A2' : 'M1+M2';
  return canonicalElectrode(r) ?? r.toUpperCase();
}

/** Classifies an EEG derivation from its electrode and reference (see DerivationKind). */
export function classifyDerivation(electrode: string, reference: string | null): Derivation {
  const referredTo = referenceKey(reference);
  if (referredTo === null) return { kind: 'common', referredTo };
  if (!isScalpSite(electrode)) return { kind: 'other', referredTo };
  if (referredTo === 'M1+M2' || referredTo === 'A1+A2') return { kind: 'linked-mastoids', referredTo };
  const mastoid = MASTOIDS[referredTo];
  if (mastoid) {
    const side = hemisphere(electrode);
    if (side === 'midline') return { kind: 'midline-mastoid', referredTo };
    return { kind: side === hemisphere(mastoid) ? 'ipsilateral-mastoid' : 'contralateral-mastoid', referredTo };
  }
  if (isScalpSite(referredTo)) return { kind: 'bipolar', referredTo };
  return { kind: 'other', referredTo };
}

/** The stored channel name: both electrodes of a scalp-to-scalp derivation (Pz-Oz), else the electrode (C3). */
export function derivationName(electrode: string, derivation: Derivation): string {
  return derivation.kind === 'bipolar' ? `${electrode}-${derivation.referredTo}` : electrode;
}
