// Channel labels of EDF files: type prefix, electrode and reference ("EEG C3-M2" → EEG, C3, M2).
// EDF+ 2003 §2.1.3.7 recommends "Type Sensor" labels such as "EEG Fpz-Cz"; electrode names
// follow the 10-20/10-10 system (ACNS guideline 2016), mastoids M1/M2, older earlobes A1/A2.
// Pure: no I/O.

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

/** Voltage units (µV, uV, mV, V, nV): only these can carry EEG/EOG/EMG/ECG by name alone. */
function isVoltage(unit: string): boolean {
  return /^(µ|μ|u|m|n)?V$/.test(unit.trim());
}

/**
 * Splits an EDF channel label. Type, in this order: a leading type word (EEG, EOG, EMG, ECG/EKG,
 * RESP, MISC); a sensor word (ECG, LOC, chin, thorax…); a 10-20/10-10 electrode name → EEG;
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
