/**
 * Sleep-stage labels → AASM stages (pure).
 *
 * AASM stages W, N1, N2, N3, R; older 4-stage scoring maps S1→N1, S2→N2, S3 and S4→N3, REM→R
 * (AASM Manual, Iber et al. 2007). Movement time and unknown/unscorable epochs become 'unscored'.
 * EDF+ stores a hypnogram as a signal with the codes W,1,2,3,4,R,M = 0..6 and unscored = 9
 * (EDF+, Kemp & Olivan 2003); the digit strings '0'..'6' and '9' map the same way, which agrees
 * with the plain labels '1'..'4' of older scoring.
 *
 * Matching ignores case and all white space ('Sleep stage W' = 'sleepstage w' = 'SLEEPSTAGEW').
 * A user label map (keys matched the same way) takes precedence over the built-in table.
 */
import type { Stage } from '../stages.ts';
import { isStage } from '../stages.ts';

/** A user-supplied label → stage map; keys are matched case- and white-space-insensitively. */
export type LabelMap = Record<string, Stage>;

/** Lower-cases and removes all white space, so labels compare case- and space-insensitively. */
export function normalizeLabel(text: string): string {
  return text.toLowerCase().replace(/\s+/g, '');
}

// Written in readable form; the keys are normalised once below.
const BUILT_IN: Record<Stage, string[]> = {
  W: ['W', 'Wake', 'Stage W', 'Sleep stage W', 'Stage 0', 'Sleep stage 0', '0'],
  N1: ['N1', 'S1', '1', 'Stage 1', 'Stage N1', 'Sleep stage 1', 'Sleep stage N1'],
  N2: ['N2', 'S2', '2', 'Stage 2', 'Stage N2', 'Sleep stage 2', 'Sleep stage N2'],
  N3: ['N3', 'S3', 'S4', '3', '4', 'Stage 3', 'Stage 4', 'Stage N3', 'Sleep stage 3', 'Sleep stage 4', 'Sleep stage N3'],
  R: ['R', 'REM', 'Stage R', 'Stage REM', 'Sleep stage R', 'Sleep stage REM', '5'],
  unscored: [
    'unscored',
    '?',
    'M',
    'MT',
    'U',
    'movement',
    'movement time',
    'unknown',
    'Sleep stage ?',
    'Sleep stage M',
    'Sleep stage MT',
    'Stage M',
    'Stage MT',
    '6',
    '9',
  ],
};

const TABLE = new Map<string, Stage>();
for (const [stage, labels] of Object.entries(BUILT_IN) as [Stage, string[]][]) {
  for (const label of labels) TABLE.set(normalizeLabel(label), stage);
}

/**
 * The stage a label stands for, or undefined when neither the user map nor the built-in table
 * knows it. Throws a TypeError when the user map maps a label to something that is not a Stage.
 */
export function stageFromLabel(text: string, userMap?: LabelMap): Stage | undefined {
  const key = normalizeLabel(text);
  if (userMap) {
    for (const [label, stage] of Object.entries(userMap)) {
      if (normalizeLabel(label) !== key) continue;
      if (!isStage(stage)) {
        throw new TypeError(`label map: '${label}' maps to '${String(stage)}', which is not one of W, N1, N2, N3, R, unscored`);
      }
      return stage;
    }
  }
  return TABLE.get(key);
}

/**
 * Whether an unknown text still looks like it was meant as a stage label ('Sleep stage 5',
 * 'Stage X', 'N4'), so event-style sources report it instead of ignoring it as another event.
 */
export function looksLikeStageLabel(text: string): boolean {
  const key = normalizeLabel(text);
  return /^(sleepstage|stage)/.test(key) || /^[nrs]\d+$/.test(key) || /^\d+$/.test(key);
}

const SIGNAL_CODES: Record<number, Stage> = { 0: 'W', 1: 'N1', 2: 'N2', 3: 'N3', 4: 'N3', 5: 'R', 6: 'unscored', 9: 'unscored' };

/** EDF+ hypnogram-as-signal code (W,1,2,3,4,R,M = 0..6, unscored = 9) → stage; undefined otherwise. */
export function stageFromSignalCode(code: number): Stage | undefined {
  return Number.isInteger(code) ? SIGNAL_CODES[code] : undefined;
}
